import type { Migration } from '../migrate';

/**
 * One counter per initiative that moves, to a new number from one sequence, whenever a
 * record the initiative's pages show changes: its analyses and runs (not a run's heartbeat
 * or progress reports), review steps and comments, briefs, extracts, the register of
 * prespecified modifiers and saved plans, credibility ratings, memberships, extracts once
 * added, the initiative itself, and the names and status of its members. Triggers move it in the transaction of
 * the change, whatever code made it, so what is worked out from those records (credibility
 * items, plan standings, a finished run's results page, the review board) may be kept in
 * memory for as long as a later reading of the counter gives the same number
 * (src/lib/server/initiativeStamp.ts, src/lib/server/pageCache.ts). The audit trail,
 * notifications, upload progress and raw file chunks do not move it: no page that is kept
 * shows them. Row-level security in policies/rls/018_initiative_stamps.sql.
 */

/** Tables whose rows carry initiative_id and whose every change moves the counter. */
const TABLES = [
  'analyses', 'review_steps', 'run_comments', 'briefs', 'brief_versions', 'brief_settings', 'brief_recipients',
  'prespecified_modifiers', 'interaction_plans', 'credibility_ratings', 'memberships',
];
/**
 * Extracts and their versions move it when changed (confirmed, archived), not when added: a
 * new extract or version shows on no kept page, and it is added in the long transaction
 * that stores an upload, which would otherwise hold the counter's row (and every other
 * change of the initiative) until the upload is stored.
 */
const CHANGED_ONLY = ['extracts', 'extract_versions'];
/** The columns of a run that a page shows; heartbeat_at and progress change every few seconds while it runs and are left out. */
const RUN_COLUMNS = 'status, result, error, worker, seed, engine_version, started_at, finished_at, cancel_requested, initiative_id';

export const up: Migration = async ({ context }) => {
  await context.sql(`
    -- Counters are drawn from one sequence, not incremented: a number taken by a transaction that
    -- rolls back is never given again, so nothing worked out inside it can match a later change.
    CREATE SEQUENCE initiative_stamp_sequence;
    CREATE TABLE initiative_stamps (
      initiative_id uuid PRIMARY KEY REFERENCES initiatives(id) ON DELETE CASCADE,
      stamp bigint NOT NULL DEFAULT 0
    );
    INSERT INTO initiative_stamps (initiative_id) SELECT id FROM initiatives;

    -- SECURITY DEFINER: the app role only reads the counters.
    CREATE FUNCTION app_move_initiative_stamps(ids uuid[]) RETURNS void
      LANGUAGE sql SECURITY DEFINER SET search_path = public
      AS $$
        INSERT INTO initiative_stamps AS s (initiative_id, stamp)
          SELECT changed.id, nextval('initiative_stamp_sequence')
            FROM (SELECT DISTINCT id FROM unnest(ids) AS id WHERE id IS NOT NULL) AS changed
           -- An initiative being deleted (its rows going with it) needs no counter.
           WHERE EXISTS (SELECT 1 FROM initiatives i WHERE i.id = changed.id)
          ON CONFLICT (initiative_id) DO UPDATE SET stamp = EXCLUDED.stamp
      $$;
    REVOKE ALL ON FUNCTION app_move_initiative_stamps(uuid[]) FROM PUBLIC;

    -- A row of an initiative's table: the initiative it belongs to (both, should it move between two).
    CREATE FUNCTION app_move_initiative_stamp() RETURNS trigger
      LANGUAGE plpgsql SECURITY DEFINER SET search_path = public
      AS $$
      BEGIN
        IF TG_OP = 'INSERT' THEN PERFORM app_move_initiative_stamps(ARRAY[NEW.initiative_id]);
        ELSIF TG_OP = 'DELETE' THEN PERFORM app_move_initiative_stamps(ARRAY[OLD.initiative_id]);
        ELSE PERFORM app_move_initiative_stamps(ARRAY[NEW.initiative_id, OLD.initiative_id]);
        END IF;
        RETURN NULL;
      END $$;
    REVOKE ALL ON FUNCTION app_move_initiative_stamp() FROM PUBLIC;

    -- The initiative itself (its name, settings, archiving), and a new initiative gets its counter.
    CREATE FUNCTION app_move_own_initiative_stamp() RETURNS trigger
      LANGUAGE plpgsql SECURITY DEFINER SET search_path = public
      AS $$
      BEGIN
        PERFORM app_move_initiative_stamps(ARRAY[NEW.id]);
        RETURN NULL;
      END $$;
    REVOKE ALL ON FUNCTION app_move_own_initiative_stamp() FROM PUBLIC;

    -- A person's name or status shows on every initiative they belong to.
    CREATE FUNCTION app_move_member_initiative_stamps() RETURNS trigger
      LANGUAGE plpgsql SECURITY DEFINER SET search_path = public
      AS $$
      BEGIN
        PERFORM app_move_initiative_stamps(ARRAY(SELECT initiative_id FROM memberships WHERE user_id = NEW.id));
        RETURN NULL;
      END $$;
    REVOKE ALL ON FUNCTION app_move_member_initiative_stamps() FROM PUBLIC;

    CREATE TRIGGER runs_move_initiative_stamp AFTER INSERT OR DELETE OR UPDATE OF ${RUN_COLUMNS} ON runs
      FOR EACH ROW EXECUTE FUNCTION app_move_initiative_stamp();
    ${TABLES.map((table) => `CREATE TRIGGER ${table}_move_initiative_stamp AFTER INSERT OR UPDATE OR DELETE ON ${table}
      FOR EACH ROW EXECUTE FUNCTION app_move_initiative_stamp();`).join('\n    ')}
    ${CHANGED_ONLY.map((table) => `CREATE TRIGGER ${table}_move_initiative_stamp AFTER UPDATE OR DELETE ON ${table}
      FOR EACH ROW EXECUTE FUNCTION app_move_initiative_stamp();`).join('\n    ')}
    CREATE TRIGGER initiatives_move_initiative_stamp AFTER INSERT OR UPDATE ON initiatives
      FOR EACH ROW EXECUTE FUNCTION app_move_own_initiative_stamp();
    CREATE TRIGGER users_move_initiative_stamps AFTER UPDATE OF display_name, email, status ON users
      FOR EACH ROW EXECUTE FUNCTION app_move_member_initiative_stamps();
  `);
  await context.applyPolicyFile('018_initiative_stamps.sql');
};

export const down: Migration = async ({ context }) => {
  await context.sql(`
    DROP TRIGGER IF EXISTS runs_move_initiative_stamp ON runs;
    ${[...TABLES, ...CHANGED_ONLY].map((table) => `DROP TRIGGER IF EXISTS ${table}_move_initiative_stamp ON ${table};`).join('\n    ')}
    DROP TRIGGER IF EXISTS initiatives_move_initiative_stamp ON initiatives;
    DROP TRIGGER IF EXISTS users_move_initiative_stamps ON users;
    DROP FUNCTION IF EXISTS app_move_member_initiative_stamps();
    DROP FUNCTION IF EXISTS app_move_own_initiative_stamp();
    DROP FUNCTION IF EXISTS app_move_initiative_stamp();
    DROP FUNCTION IF EXISTS app_move_initiative_stamps(uuid[]);
    DROP TABLE IF EXISTS initiative_stamps;
    DROP SEQUENCE IF EXISTS initiative_stamp_sequence;
  `);
};
