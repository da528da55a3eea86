-- Re-runs that verify a past run. An auditor may start one in their initiatives (a run
-- record with verifies_run_id set and themselves as its starter), and the job worker,
-- acting as that auditor, may update it as it executes. Auditors change nothing else:
-- ordinary runs stay the analysts' (004_analyses_and_runs.sql).

CREATE POLICY runs_insert_verification ON runs FOR INSERT
  WITH CHECK (
    verifies_run_id IS NOT NULL AND started_by = app_current_user_id()
    AND initiative_id IN (SELECT app_auditor_initiative_ids())
  );
CREATE POLICY runs_update_verification ON runs FOR UPDATE
  USING (
    verifies_run_id IS NOT NULL AND started_by = app_current_user_id()
    AND initiative_id IN (SELECT app_auditor_initiative_ids())
  )
  WITH CHECK (
    verifies_run_id IS NOT NULL AND started_by = app_current_user_id()
    AND initiative_id IN (SELECT app_auditor_initiative_ids())
  );
GRANT UPDATE (verification) ON runs TO {{app_role}};
