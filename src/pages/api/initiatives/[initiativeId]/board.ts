import { boardOf } from '@/features/review/review.server';
import { authorize, requireMember } from '@/lib/server/authorize';
import { endpoint, json, uuidParam } from '@/lib/server/http';

/** GET /api/initiatives/{initiativeId}/board: every analysis under the state of its review. Every member. */
export const GET = endpoint(async ({ locals, params }) => {
  const initiativeId = uuidParam(params.initiativeId, 'That initiative');
  requireMember(locals.user, initiativeId);
  authorize(locals.user, 'read', 'Analysis', { initiativeId });
  return json(await locals.db((t) => boardOf(t, initiativeId)));
});
