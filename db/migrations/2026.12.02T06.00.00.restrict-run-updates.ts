import type { Migration } from '../migrate';

/** Only a run's starter, or an administrator of its initiative, may change (cancel) it. */
export const up: Migration = async ({ context }) => {
  await context.applyPolicyFile('010_run_cancel.sql');
};

/** Back to "any analyst of the initiative" (as policies/rls/004_analyses_and_runs.sql created it). */
export const down: Migration = async ({ context }) => {
  await context.sql(`
    DROP POLICY IF EXISTS runs_update_by_admin ON runs;
    DROP POLICY IF EXISTS runs_update ON runs;
    CREATE POLICY runs_update ON runs FOR UPDATE
      USING (initiative_id IN (SELECT app_analyst_initiative_ids()))
      WITH CHECK (initiative_id IN (SELECT app_analyst_initiative_ids()));
  `);
};
