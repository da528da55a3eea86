import type { Migration } from '../migrate';

/**
 * One counter per initiative that moves (to a new number from one sequence) whenever
 * something a run's credibility items or plan standing are worked out from changes: a run
 * is added, changes status or is removed; an analysis is declared prespecified (or not);
 * the register of prespecified modifiers or the saved plans change; a clinician rates a
 * run's credibility. (The extract version a run reads cannot change once confirmed.)
 * Triggers move it in the transaction of the change itself, whatever code made it, so a
 * results page or the review board may keep those items in memory for as long as the
 * counter it read with them stays the same (src/lib/server/evidenceCache.ts). Row-level
 * security in policies/rls/018_evidence_stamps.sql.
 */
export const up: Migration = async ({ context }) => {
  await context.sql(`
    -- Counters are drawn from one sequence, not incremented: a value taken by a transaction that
    -- rolls back is never given again, so nothing worked out inside it can match a later change.
    CREATE SEQUENCE evidence_stamp_sequence;
    CREATE TABLE evidence_stamps (
      initiative_id uuid PRIMARY KEY REFERENCES initiatives(id),
      stamp bigint NOT NULL DEFAULT 0
    );
    INSERT INTO evidence_stamps (initiative_id) SELECT id FROM initiatives;

    -- Moves the counter of the changed row's initiative (both, should a row move between two).
    -- SECURITY DEFINER: the app role only reads the counters.
    CREATE FUNCTION app_move_evidence_stamp() RETURNS trigger
      LANGUAGE plpgsql SECURITY DEFINER SET search_path = public
      AS $$
      DECLARE
        ids uuid[];
      BEGIN
        IF TG_OP = 'INSERT' THEN ids := ARRAY[NEW.initiative_id];
        ELSIF TG_OP = 'DELETE' THEN ids := ARRAY[OLD.initiative_id];
        ELSE ids := ARRAY[NEW.initiative_id, OLD.initiative_id];
        END IF;
        INSERT INTO evidence_stamps AS e (initiative_id, stamp)
          SELECT id, nextval('evidence_stamp_sequence') FROM (SELECT DISTINCT id FROM unnest(ids) AS id WHERE id IS NOT NULL) AS changed
          ON CONFLICT (initiative_id) DO UPDATE SET stamp = EXCLUDED.stamp;
        RETURN NULL;
      END $$;
    REVOKE ALL ON FUNCTION app_move_evidence_stamp() FROM PUBLIC;

    -- A run counts once it is added, when its status changes (a heartbeat or progress report does not) and when removed.
    CREATE TRIGGER runs_move_evidence_stamp AFTER INSERT OR DELETE OR UPDATE OF status, result, initiative_id ON runs
      FOR EACH ROW EXECUTE FUNCTION app_move_evidence_stamp();
    CREATE TRIGGER analyses_move_evidence_stamp AFTER INSERT OR DELETE OR UPDATE OF prespecified, prespecified_at, spec, initiative_id ON analyses
      FOR EACH ROW EXECUTE FUNCTION app_move_evidence_stamp();
    CREATE TRIGGER prespecified_modifiers_move_evidence_stamp AFTER INSERT OR UPDATE OR DELETE ON prespecified_modifiers
      FOR EACH ROW EXECUTE FUNCTION app_move_evidence_stamp();
    CREATE TRIGGER interaction_plans_move_evidence_stamp AFTER INSERT OR UPDATE OR DELETE ON interaction_plans
      FOR EACH ROW EXECUTE FUNCTION app_move_evidence_stamp();
    CREATE TRIGGER credibility_ratings_move_evidence_stamp AFTER INSERT OR UPDATE OR DELETE ON credibility_ratings
      FOR EACH ROW EXECUTE FUNCTION app_move_evidence_stamp();
  `);
  await context.applyPolicyFile('018_evidence_stamps.sql');
};

export const down: Migration = async ({ context }) => {
  await context.sql(`
    DROP TRIGGER IF EXISTS runs_move_evidence_stamp ON runs;
    DROP TRIGGER IF EXISTS analyses_move_evidence_stamp ON analyses;
    DROP TRIGGER IF EXISTS prespecified_modifiers_move_evidence_stamp ON prespecified_modifiers;
    DROP TRIGGER IF EXISTS interaction_plans_move_evidence_stamp ON interaction_plans;
    DROP TRIGGER IF EXISTS credibility_ratings_move_evidence_stamp ON credibility_ratings;
    DROP FUNCTION IF EXISTS app_move_evidence_stamp();
    DROP TABLE IF EXISTS evidence_stamps;
    DROP SEQUENCE IF EXISTS evidence_stamp_sequence;
  `);
};
