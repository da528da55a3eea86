import { readableRun } from '@/features/runs/runAccess';
import { endpoint, json, requireUser, uuidParam } from '@/lib/server/http';

/**
 * GET /api/runs/{runId}: `{ status, progress, result, ... }` where `result` is the engine's
 * result schema unchanged (null until the run succeeds).
 */
export const GET = endpoint(async ({ locals, params, url }) => {
  const user = requireUser(locals);
  const runId = uuidParam(params.runId, 'That run');
  // `?fields=status` leaves the (large) result out, for progress polling.
  return json(await locals.db((t) => readableRun(t, user, runId, { withResult: url.searchParams.get('fields') !== 'status' })));
});
