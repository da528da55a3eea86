-- Who may change a run (issue 13): its starter, and an administrator who belongs to its
-- initiative. Analysts used to be able to update (and so cancel) any run of their
-- initiatives, an auditor's verification re-run included. The job worker acts as the run's
-- starter, so its updates still pass; verification re-runs keep their own policy
-- (006_run_verification.sql).

DROP POLICY IF EXISTS runs_update ON runs;
CREATE POLICY runs_update ON runs FOR UPDATE
  USING (initiative_id IN (SELECT app_analyst_initiative_ids()) AND started_by = app_current_user_id())
  WITH CHECK (initiative_id IN (SELECT app_analyst_initiative_ids()) AND started_by = app_current_user_id());

DROP POLICY IF EXISTS runs_update_by_admin ON runs;
CREATE POLICY runs_update_by_admin ON runs FOR UPDATE
  USING (app_current_user_is_admin() AND initiative_id IN (SELECT app_member_initiative_ids()))
  WITH CHECK (app_current_user_is_admin() AND initiative_id IN (SELECT app_member_initiative_ids()));
