import { listBriefs } from '@/features/briefs/briefs.server';
import { authorize, requireMember } from '@/lib/server/authorize';
import { endpoint, json, uuidParam } from '@/lib/server/http';

/** GET /api/initiatives/{initiativeId}/briefs: the initiative's briefs with their states and versions. Every member. */
export const GET = endpoint(async ({ locals, params }) => {
  const initiativeId = uuidParam(params.initiativeId, 'That initiative');
  requireMember(locals.user, initiativeId);
  authorize(locals.user, 'read', 'Brief', { initiativeId });
  return json(await locals.db((t) => listBriefs(t, { initiativeId })));
});
