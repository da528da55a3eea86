import { getRun } from '../../../../features/runs/runs.server';
import { authorize } from '../../../../lib/server/authorize';
import { notFound } from '../../../../lib/server/errors';
import { endpoint, json, requireUser, uuidParam } from '../../../../lib/server/http';

/**
 * GET /api/runs/{runId}: `{ status, progress, result, ... }` where `result` is the engine's
 * result schema unchanged (null until the run succeeds).
 */
export const GET = endpoint(async ({ locals, params, url }) => {
  const user = requireUser(locals);
  const runId = uuidParam(params.runId, 'That run');
  // `?fields=status` leaves the (large) result out, for progress polling.
  const run = await locals.db((t) => getRun(t, runId, { withResult: url.searchParams.get('fields') !== 'status' }));
  if (!run) throw notFound('That run');
  authorize(user, 'read', 'Run', { initiativeId: run.initiativeId }, { hide: true });
  return json(run);
});
