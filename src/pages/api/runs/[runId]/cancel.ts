import { requestCancel } from '@/features/runs/runs.server';
import { readableRun } from '@/features/runs/runAccess';
import { authorize } from '@/lib/server/authorize';
import { clientAddress, endpoint, json, requireUser, uuidParam } from '@/lib/server/http';

/** POST /api/runs/{runId}/cancel: stops a queued or running run; answers its status. */
export const POST = endpoint(async (context) => {
  const user = requireUser(context.locals);
  const runId = uuidParam(context.params.runId, 'That run');
  const status = await context.locals.db(async (t) => {
    const run = await readableRun(t, user, runId);
    authorize(user, 'cancel', 'Run', { initiativeId: run.initiativeId, startedBy: run.startedBy.id, verification: run.verifiesRunId !== null });
    return requestCancel(t, { id: user.id, clientAddress: clientAddress(context) }, runId);
  });
  return json({ status });
});
