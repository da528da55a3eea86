import { listAnalyses } from '@/features/analyses/analyses.server';
import { authorize, requireMember } from '@/lib/server/authorize';
import { endpoint, json, uuidParam } from '@/lib/server/http';

/** GET /api/initiatives/{initiativeId}/analyses: the initiative's analyses, newest first. */
export const GET = endpoint(async ({ locals, params }) => {
  const initiativeId = uuidParam(params.initiativeId, 'That initiative');
  requireMember(locals.user, initiativeId);
  authorize(locals.user, 'read', 'Analysis', { initiativeId });
  return json(await locals.db((t) => listAnalyses(t, initiativeId)));
});
