import { startVerification } from '@/features/runs/runs.server';
import { readableRun } from '@/features/runs/runAccess';
import { authorize } from '@/lib/server/authorize';
import { clientAddress, endpoint, json, requireUser, uuidParam } from '@/lib/server/http';

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
    const run = await readableRun(t, user, runId);
    authorize(user, 'rerun', 'Run', { initiativeId: run.initiativeId });
    return startVerification(t, { id: user.id, clientAddress: clientAddress(context) }, runId);
  });
  return json({ runId: started.runId }, 202);
});
