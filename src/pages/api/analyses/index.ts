import { AnalysisBody } from '@/features/analyses/analysisApi.schema';
import { createAnalysis } from '@/features/analyses/analyses.server';
import { authorize, requireMember } from '@/lib/server/authorize';
import { clientAddress, endpoint, json, parseBody, requireUser } from '@/lib/server/http';

/** POST /api/analyses: creates an analysis pinned to one confirmed extract version (201 with its id). */
export const POST = endpoint(async (context) => {
  const user = requireUser(context.locals);
  const body = await parseBody(context.request, AnalysisBody);
  requireMember(user, body.initiativeId);
  authorize(user, 'create', 'Analysis', { initiativeId: body.initiativeId });
  const created = await context.locals.db((t) => createAnalysis(t, { id: user.id, clientAddress: clientAddress(context) }, body));
  return json(created, 201);
});
