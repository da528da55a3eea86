import { AnalysisBody } from '@/features/analyses/analysisApi.schema';
import { getAnalysis, updateAnalysis } from '@/features/analyses/analyses.server';
import { authorize } from '@/lib/server/authorize';
import { notFound } from '@/lib/server/errors';
import { clientAddress, endpoint, json, noContent, parseBody, requireUser, uuidParam } from '@/lib/server/http';

/** GET /api/analyses/{id}: the analysis, its specification and its latest run. */
export const GET = endpoint(async ({ locals, params }) => {
  const user = requireUser(locals);
  const id = uuidParam(params.id, 'That analysis');
  const analysis = await locals.db((t) => getAnalysis(t, id));
  if (!analysis) throw notFound('That analysis');
  authorize(user, 'read', 'Analysis', { initiativeId: analysis.initiativeId }, { hide: true });
  return json(analysis);
});

/** PATCH /api/analyses/{id}: changes an analysis (the whole body); past runs keep their snapshot (204). */
export const PATCH = endpoint(async (context) => {
  const user = requireUser(context.locals);
  const id = uuidParam(context.params.id, 'That analysis');
  const body = await parseBody(context.request, AnalysisBody);
  await context.locals.db(async (t) => {
    const analysis = await getAnalysis(t, id);
    if (!analysis) throw notFound('That analysis');
    authorize(user, 'read', 'Analysis', { initiativeId: analysis.initiativeId }, { hide: true });
    authorize(user, 'update', 'Analysis', { initiativeId: analysis.initiativeId });
    await updateAnalysis(t, { id: user.id, clientAddress: clientAddress(context) }, id, body);
  });
  return noContent();
});
