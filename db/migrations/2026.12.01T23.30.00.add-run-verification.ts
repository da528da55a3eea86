import type { Migration } from '../migrate';

/**
 * Verification re-runs: a run may name the past run it re-executes (same specification
 * snapshot, extract version and seed) and, once finished, store how the two compare
 * (policies/rls/006_run_verification.sql lets auditors start and execute them).
 */
export const up: Migration = async ({ context }) => {
  await context.sql(`
    ALTER TABLE runs ADD COLUMN verifies_run_id uuid REFERENCES runs(id);
    ALTER TABLE runs ADD COLUMN verification jsonb;
    ALTER TABLE runs ADD CONSTRAINT runs_verification_of_a_run CHECK (verification IS NULL OR verifies_run_id IS NOT NULL);
    -- A run page lists the verifications of that run.
    CREATE INDEX runs_verifies_idx ON runs (verifies_run_id, queued_at DESC) WHERE verifies_run_id IS NOT NULL;
  `);
  await context.applyPolicyFile('006_run_verification.sql');
};

export const down: Migration = async ({ context }) => {
  await context.sql(`
    REVOKE UPDATE (verification) ON runs FROM {{app_role}};
    DROP POLICY IF EXISTS runs_update_verification ON runs;
    DROP POLICY IF EXISTS runs_insert_verification ON runs;
    DROP INDEX IF EXISTS runs_verifies_idx;
    ALTER TABLE runs DROP CONSTRAINT IF EXISTS runs_verification_of_a_run;
    ALTER TABLE runs DROP COLUMN IF EXISTS verification;
    ALTER TABLE runs DROP COLUMN IF EXISTS verifies_run_id;
  `);
};
