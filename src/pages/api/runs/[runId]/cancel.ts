import { getRun, requestCancel } from '../../../../features/runs/runs.server';
import { authorize } from '../../../../lib/server/authorize';
import { notFound } from '../../../../lib/server/errors';
import { clientAddress, endpoint, json, requireUser, uuidParam } from '../../../../lib/server/http';

/** POST /api/runs/{runId}/cancel: stops a queued or running run; answers its status. */
export const POST = endpoint(async (context) => {
  const user = requireUser(context.locals);
  const runId = uuidParam(context.params.runId, 'That run');
  const status = await context.locals.db(async (t) => {
    const run = await getRun(t, runId, { withResult: false });
    if (!run) throw notFound('That run');
    authorize(user, 'read', 'Run', { initiativeId: run.initiativeId }, { hide: true });
    authorize(user, 'cancel', 'Run', { initiativeId: run.initiativeId, startedBy: run.startedBy.id, verification: run.verifiesRunId !== null });
    return requestCancel(t, { id: user.id, clientAddress: clientAddress(context) }, runId);
  });
  return json({ status });
});
