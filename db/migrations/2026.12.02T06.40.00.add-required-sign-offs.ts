import type { Migration } from '../migrate';

/**
 * An initiative may require sign-offs from several distinct clinicians before a run counts
 * as signed off (`required_sign_offs`, 1 to 5, 1 by default as before). While fewer have
 * signed since the latest submission, each signature is recorded as a 'co-signed' step: a
 * full signature (meaning, result digest, password re-entered) that leaves the run's state
 * as it was, so every reading of "the latest step" skips it. The signature that reaches the
 * number is the 'signed-off' step. The decide policy learns the new kind
 * (policies/rls/013_review_co_signatures.sql).
 */
export const up: Migration = async ({ context }) => {
  await context.sql(`
    ALTER TABLE initiatives
      ADD COLUMN required_sign_offs smallint NOT NULL DEFAULT 1 CHECK (required_sign_offs BETWEEN 1 AND 5);
    ALTER TABLE review_steps DROP CONSTRAINT review_steps_kind_check;
    ALTER TABLE review_steps ADD CONSTRAINT review_steps_kind_check
      CHECK (kind IN ('submitted', 'co-signed', 'signed-off', 'sent-back'));
    -- The state of a run is its latest step other than a co-signature; this finds it quickly.
    CREATE INDEX review_steps_state_idx ON review_steps (run_id, id DESC) WHERE kind <> 'co-signed';
  `);
  await context.applyPolicyFile('013_review_co_signatures.sql');
};

export const down: Migration = async ({ context }) => {
  await context.sql(`
    DROP POLICY IF EXISTS review_steps_decide ON review_steps;
    CREATE POLICY review_steps_decide ON review_steps FOR INSERT
      WITH CHECK (
        kind IN ('signed-off', 'sent-back') AND actor_id = app_current_user_id()
        AND initiative_id IN (SELECT app_clinician_initiative_ids())
        AND NOT EXISTS (SELECT 1 FROM runs r WHERE r.id = run_id AND r.started_by = app_current_user_id())
      );
    DROP INDEX IF EXISTS review_steps_state_idx;
    DELETE FROM review_steps WHERE kind = 'co-signed';
    ALTER TABLE review_steps DROP CONSTRAINT review_steps_kind_check;
    ALTER TABLE review_steps ADD CONSTRAINT review_steps_kind_check CHECK (kind IN ('submitted', 'signed-off', 'sent-back'));
    ALTER TABLE initiatives DROP COLUMN IF EXISTS required_sign_offs;
  `);
};
