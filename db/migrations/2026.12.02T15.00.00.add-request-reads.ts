import type { Migration } from '../migrate';

/**
 * The reads on every request's path (a session with its user and memberships, a token
 * user's memberships, a run's status and its initiative's counter, an initiative's
 * counter) become PL/pgSQL functions the app calls as prepared statements, and the two
 * helpers every row-level-security policy calls become PL/pgSQL too, so that their plans
 * are kept per connection instead of made again on every request. Same statements, same
 * row-level security; see policies/rls/019_request_reads.sql.
 */
export const up: Migration = async ({ context }) => {
  await context.applyPolicyFile('019_request_reads.sql');
};

/** Back to the SQL helpers of policies/rls/001_identity.sql, without the read functions. */
export const down: Migration = async ({ context }) => {
  await context.sql(`
    DROP FUNCTION IF EXISTS app_read_session(text);
    DROP FUNCTION IF EXISTS app_read_memberships(uuid);
    DROP FUNCTION IF EXISTS app_read_run_stamp(uuid, uuid);
    DROP FUNCTION IF EXISTS app_read_initiative_stamp(uuid, uuid);
    CREATE OR REPLACE FUNCTION app_member_initiative_ids() RETURNS SETOF uuid
      LANGUAGE sql STABLE SECURITY DEFINER SET search_path = public
      AS $$
        SELECT m.initiative_id FROM memberships m JOIN users u ON u.id = m.user_id
        WHERE m.user_id = app_current_user_id() AND u.status = 'active'
      $$;
    CREATE OR REPLACE FUNCTION app_current_user_is_admin() RETURNS boolean
      LANGUAGE sql STABLE SECURITY DEFINER SET search_path = public
      AS $$
        SELECT coalesce((SELECT is_admin AND status = 'active' FROM users WHERE id = app_current_user_id()), false)
      $$;
  `);
};
