import type { Migration } from '../migrate';

/**
 * The stale-run sweep also ends queued runs whose job is gone from the queue
 * (policies/rls/008_run_sweep.sql). A run's job is now written in the same transaction
 * as the run, so this only catches a job removed or lost afterwards.
 */
export const up: Migration = async ({ context }) => {
  await context.applyPolicyFile('008_run_sweep.sql');
};

/** Back to the sweep of running runs only (as policies/rls/004_analyses_and_runs.sql created it). */
export const down: Migration = async ({ context }) => {
  await context.sql(`
    DROP INDEX IF EXISTS runs_queued_idx;
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
  `);
};
