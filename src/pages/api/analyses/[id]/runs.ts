import { getAnalysis } from '@/features/analyses/analyses.server';
import { bodyHashOf, claimKey, idempotencyKeyOf, settleKey } from '@/features/runs/runRequests.server';
import { listRuns, startRun } from '@/features/runs/runs.server';
import { authorize } from '@/lib/server/authorize';
import { notFound } from '@/lib/server/errors';
import { clientAddress, endpoint, json, requireUser, uuidParam } from '@/lib/server/http';

/** GET /api/analyses/{id}/runs: the analysis's runs, newest first, without results. */
export const GET = endpoint(async ({ locals, params }) => {
  const user = requireUser(locals);
  const id = uuidParam(params.id, 'That analysis');
  return json(
    await locals.db(async (t) => {
      const analysis = await getAnalysis(t, id);
      if (!analysis) throw notFound('That analysis');
      authorize(user, 'read', 'Run', { initiativeId: analysis.initiativeId }, { hide: true });
      return listRuns(t, id);
    }),
  );
});

/**
 * POST /api/analyses/{id}/runs: queues a run of the analysis as it stands (202 with
 * `{ runId }`). With an `Idempotency-Key` header, the same key (per person and analysis)
 * answers with the same run for 24 hours; the same key with another body is refused (422).
 */
export const POST = endpoint(async (context) => {
  const user = requireUser(context.locals);
  const id = uuidParam(context.params.id, 'That analysis');
  const key = idempotencyKeyOf(context.request.headers);
  const bodyHash = bodyHashOf(await context.request.text());
  const started = await context.locals.db(async (t) => {
    const analysis = await getAnalysis(t, id);
    if (!analysis) throw notFound('That analysis');
    authorize(user, 'read', 'Analysis', { initiativeId: analysis.initiativeId }, { hide: true });
    authorize(user, 'run', 'Run', { initiativeId: analysis.initiativeId });
    const claim = key === null ? null : { userId: user.id, analysisId: id, key, bodyHash };
    if (claim) {
      const earlier = await claimKey(t, claim);
      if (earlier !== 'claimed') return earlier;
    }
    const run = await startRun(t, { id: user.id, clientAddress: clientAddress(context) }, id);
    if (claim) await settleKey(t, claim, run.runId);
    return run;
  });
  return json({ runId: started.runId }, 202);
});
