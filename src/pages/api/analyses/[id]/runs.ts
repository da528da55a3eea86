import { getAnalysis } from '../../../../features/analyses/analyses.server';
import { listRuns, startRun } from '../../../../features/runs/runs.server';
import { authorize } from '../../../../lib/server/authorize';
import { notFound } from '../../../../lib/server/errors';
import { clientAddress, endpoint, json, requireUser, uuidParam } from '../../../../lib/server/http';

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

/** POST /api/analyses/{id}/runs: queues a run of the analysis as it stands (202 with `{ runId }`). */
export const POST = endpoint(async (context) => {
  const user = requireUser(context.locals);
  const id = uuidParam(context.params.id, 'That analysis');
  const started = await context.locals.db(async (t) => {
    const analysis = await getAnalysis(t, id);
    if (!analysis) throw notFound('That analysis');
    authorize(user, 'read', 'Analysis', { initiativeId: analysis.initiativeId }, { hide: true });
    authorize(user, 'run', 'Run', { initiativeId: analysis.initiativeId });
    return startRun(t, { id: user.id, clientAddress: clientAddress(context) }, id);
  });
  return json({ runId: started.runId }, 202);
});
