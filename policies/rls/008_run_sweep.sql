-- The stale-run sweep, second form: besides runs whose worker stopped reporting, it ends
-- queued runs whose job is gone from the queue (no job waiting, retrying or taken for
-- them), which would otherwise wait forever. Each is recorded in the audit trail with its
-- reason. SECURITY DEFINER (the owner bypasses row-level security and reads the queue's
-- tables) because any worker or app server may sweep; it returns only the run ids.
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
    FOR r IN
      UPDATE runs SET status = 'failed', finished_at = now(),
             error = jsonb_build_object('code', 'job-missing',
               'message', 'This run was waiting for a worker, but its place in the queue was lost, so the run was ended. Nothing was computed; start a new run.')
       WHERE status = 'queued' AND queued_at < now() - make_interval(secs => stale_seconds)
         AND NOT EXISTS (
           SELECT 1 FROM pgboss.job j
            WHERE j.name = 'analysis-run' AND j.data->>'runId' = runs.id::text AND j.state IN ('created', 'retry', 'active'))
      RETURNING id, initiative_id, spec_hash, extract_sha256
    LOOP
      INSERT INTO audit_events (actor_id, action, subject_type, subject_id, initiative_id, details)
      VALUES (NULL, 'run.failed', 'run', r.id::text, r.initiative_id,
              jsonb_build_object('reason', 'job-missing', 'specHash', r.spec_hash, 'extractSha256', r.extract_sha256));
      RETURN NEXT r.id;
    END LOOP;
  END $$;
REVOKE ALL ON FUNCTION app_fail_stale_runs(integer) FROM PUBLIC;
GRANT EXECUTE ON FUNCTION app_fail_stale_runs(integer) TO {{app_role}};
-- Queued runs are few; the sweep finds the old ones without reading the rest.
CREATE INDEX IF NOT EXISTS runs_queued_idx ON runs (queued_at) WHERE status = 'queued';
