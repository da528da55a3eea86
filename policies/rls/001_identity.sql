-- Row-level security for identity and initiatives.
--
-- Who is asking reaches PostgreSQL as the transaction-local setting app.user_id, set by
-- the application's request transaction (src/lib/server/db.ts) with
-- set_config('app.user_id', <id>, true). With no identity the functions below return
-- NULL or an empty set, so every policy matches nothing: deny by default.

-- The caller's user id, or NULL. On a pooled connection that used the setting before,
-- current_setting(..., true) returns '' rather than NULL; nullif makes '' match nobody.
CREATE OR REPLACE FUNCTION app_current_user_id() RETURNS uuid
  LANGUAGE sql STABLE
  AS $$ SELECT nullif(current_setting('app.user_id', true), '')::uuid $$;

-- The initiatives the caller belongs to. SECURITY DEFINER (owned by the owner role, which
-- has BYPASSRLS) so that the memberships policy can call it without recursing into itself.
-- Only active users count: a deactivated account sees nothing even mid-request.
CREATE OR REPLACE FUNCTION app_member_initiative_ids() RETURNS SETOF uuid
  LANGUAGE sql STABLE SECURITY DEFINER SET search_path = public
  AS $$
    SELECT m.initiative_id FROM memberships m JOIN users u ON u.id = m.user_id
    WHERE m.user_id = app_current_user_id() AND u.status = 'active'
  $$;

-- Whether the caller is an active administrator. Administrators manage initiatives and
-- memberships; they see no cohort data unless they are also members.
CREATE OR REPLACE FUNCTION app_current_user_is_admin() RETURNS boolean
  LANGUAGE sql STABLE SECURITY DEFINER SET search_path = public
  AS $$
    SELECT coalesce((SELECT is_admin AND status = 'active' FROM users WHERE id = app_current_user_id()), false)
  $$;

REVOKE ALL ON FUNCTION app_member_initiative_ids() FROM PUBLIC;
REVOKE ALL ON FUNCTION app_current_user_is_admin() FROM PUBLIC;
GRANT EXECUTE ON FUNCTION app_current_user_id() TO {{app_role}};
GRANT EXECUTE ON FUNCTION app_member_initiative_ids() TO {{app_role}};
GRANT EXECUTE ON FUNCTION app_current_user_is_admin() TO {{app_role}};

-- Users and sessions hold no initiative data: the session library reads them before any
-- identity is known. Access to them is governed in the application (policies/abilities).
GRANT SELECT, INSERT, UPDATE ON users TO {{app_role}};
GRANT SELECT, INSERT, UPDATE, DELETE ON sessions TO {{app_role}};

-- Initiatives: members see theirs; administrators see and manage all of them.
ALTER TABLE initiatives ENABLE ROW LEVEL SECURITY;
ALTER TABLE initiatives FORCE ROW LEVEL SECURITY;
CREATE POLICY initiatives_read ON initiatives FOR SELECT
  USING (id IN (SELECT app_member_initiative_ids()) OR app_current_user_is_admin());
CREATE POLICY initiatives_admin_insert ON initiatives FOR INSERT
  WITH CHECK (app_current_user_is_admin());
CREATE POLICY initiatives_admin_update ON initiatives FOR UPDATE
  USING (app_current_user_is_admin()) WITH CHECK (app_current_user_is_admin());
GRANT SELECT, INSERT, UPDATE ON initiatives TO {{app_role}};

-- Memberships: members see who else is in their initiatives; administrators manage them.
ALTER TABLE memberships ENABLE ROW LEVEL SECURITY;
ALTER TABLE memberships FORCE ROW LEVEL SECURITY;
CREATE POLICY memberships_read ON memberships FOR SELECT
  USING (initiative_id IN (SELECT app_member_initiative_ids()) OR app_current_user_is_admin());
CREATE POLICY memberships_admin_insert ON memberships FOR INSERT
  WITH CHECK (app_current_user_is_admin());
CREATE POLICY memberships_admin_update ON memberships FOR UPDATE
  USING (app_current_user_is_admin()) WITH CHECK (app_current_user_is_admin());
CREATE POLICY memberships_admin_delete ON memberships FOR DELETE
  USING (app_current_user_is_admin());
GRANT SELECT, INSERT, UPDATE, DELETE ON memberships TO {{app_role}};
