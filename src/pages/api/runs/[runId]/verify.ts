import { getRun, startVerification } from '../../../../features/runs/runs.server';
import { authorize } from '../../../../lib/server/authorize';
import { notFound } from '../../../../lib/server/errors';
import { clientAddress, endpoint, json, requireUser, uuidParam } from '../../../../lib/server/http';

/**
 * POST /api/runs/{runId}/verify: queues a re-run of a finished run (its specification
 * snapshot, extract version and seed) to check that it reproduces bit for bit; 202 with
 * `{ runId }` of the re-run, whose `verification` holds the comparison once it ends.
 * Auditors of the initiative.
 */
export const POST = endpoint(async (context) => {
  const user = requireUser(context.locals);
  const runId = uuidParam(context.params.runId, 'That run');
  const started = await context.locals.db(async (t) => {
    const run = await getRun(t, runId, { withResult: false });
    if (!run) throw notFound('That run');
    authorize(user, 'read', 'Run', { initiativeId: run.initiativeId }, { hide: true });
    authorize(user, 'rerun', 'Run', { initiativeId: run.initiativeId });
    return startVerification(t, { id: user.id, clientAddress: clientAddress(context) }, runId);
  });
  await started.enqueue();
  return json({ runId: started.runId }, 202);
});
