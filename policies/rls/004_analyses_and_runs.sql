-- Row-level security for analyses and runs: every member of the initiative reads them;
-- only its analysts create or change them. The job worker acts as the analyst who
-- started the run, so its updates pass the same policy.

ALTER TABLE analyses ENABLE ROW LEVEL SECURITY;
ALTER TABLE analyses FORCE ROW LEVEL SECURITY;
CREATE POLICY analyses_read ON analyses FOR SELECT
  USING (initiative_id IN (SELECT app_member_initiative_ids()));
CREATE POLICY analyses_insert ON analyses FOR INSERT
  WITH CHECK (initiative_id IN (SELECT app_analyst_initiative_ids()) AND created_by = app_current_user_id());
CREATE POLICY analyses_update ON analyses FOR UPDATE
  USING (initiative_id IN (SELECT app_analyst_initiative_ids()))
  WITH CHECK (initiative_id IN (SELECT app_analyst_initiative_ids()) AND updated_by = app_current_user_id());
GRANT SELECT, INSERT ON analyses TO {{app_role}};
GRANT UPDATE (title, question, prespecified, prespecified_at, spec, extract_version_id, updated_by, updated_at) ON analyses TO {{app_role}};

ALTER TABLE runs ENABLE ROW LEVEL SECURITY;
ALTER TABLE runs FORCE ROW LEVEL SECURITY;
CREATE POLICY runs_read ON runs FOR SELECT
  USING (initiative_id IN (SELECT app_member_initiative_ids()));
CREATE POLICY runs_insert ON runs FOR INSERT
  WITH CHECK (initiative_id IN (SELECT app_analyst_initiative_ids()) AND started_by = app_current_user_id());
CREATE POLICY runs_update ON runs FOR UPDATE
  USING (initiative_id IN (SELECT app_analyst_initiative_ids()))
  WITH CHECK (initiative_id IN (SELECT app_analyst_initiative_ids()));
GRANT SELECT, INSERT ON runs TO {{app_role}};
GRANT UPDATE (status, progress, engine_version, seed, result, error, started_at, finished_at, heartbeat_at, worker, cancel_requested)
  ON runs TO {{app_role}};

-- Marks runs whose worker stopped reporting as failed, whichever initiative they belong
-- to, and records each in the audit trail. SECURITY DEFINER (the owner bypasses row-level
-- security) because any worker or app server may sweep; it returns only the run ids.
CREATE OR REPLACE FUNCTION app_fail_stale_runs(stale_seconds integer) RETURNS SETOF uuid
  LANGUAGE plpgsql SECURITY DEFINER SET search_path = public
  AS $$
  DECLARE
    r record;
  BEGIN
    FOR r IN
      UPDATE runs SET status = 'failed', finished_at = now(),
             error = jsonb_build_object('code', 'worker-stopped',
               'message', 'The worker running this analysis stopped reporting, so the run was ended. Nothing partial was kept; start a new run.')
       WHERE status = 'running' AND heartbeat_at < now() - make_interval(secs => stale_seconds)
      RETURNING id, initiative_id, spec_hash, extract_sha256, worker
    LOOP
      INSERT INTO audit_events (actor_id, action, subject_type, subject_id, initiative_id, details)
      VALUES (NULL, 'run.failed', 'run', r.id::text, r.initiative_id,
              jsonb_build_object('reason', 'worker-stopped', 'worker', r.worker, 'specHash', r.spec_hash, 'extractSha256', r.extract_sha256));
      RETURN NEXT r.id;
    END LOOP;
  END $$;
REVOKE ALL ON FUNCTION app_fail_stale_runs(integer) FROM PUBLIC;
GRANT EXECUTE ON FUNCTION app_fail_stale_runs(integer) TO {{app_role}};
