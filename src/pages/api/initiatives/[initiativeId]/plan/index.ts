import { plansOf, savePlan } from '@/features/planning/planning.server';
import { SavePlanBody } from '@/features/planning/planning.schema';
import { authorize, requireMember } from '@/lib/server/authorize';
import { clientAddress, endpoint, json, parseBody, requireUser, uuidParam } from '@/lib/server/http';

/** GET /api/initiatives/{initiativeId}/plan: the plan in force (`current`, or null) and the older ones (`history`). Every member. */
export const GET = endpoint(async ({ locals, params }) => {
  const initiativeId = uuidParam(params.initiativeId, 'That initiative');
  requireMember(locals.user, initiativeId);
  authorize(locals.user, 'read', 'Plan', { initiativeId });
  const plans = await locals.db((t) => plansOf(t, initiativeId));
  return json({ current: plans[0] ?? null, history: plans.slice(1) });
});

/** PUT /api/initiatives/{initiativeId}/plan: save a new plan (analysts); earlier plans stay as history. */
export const PUT = endpoint(async (context) => {
  const user = requireUser(context.locals);
  const initiativeId = uuidParam(context.params.initiativeId, 'That initiative');
  requireMember(user, initiativeId);
  authorize(user, 'update', 'Plan', { initiativeId });
  const body = await parseBody(context.request, SavePlanBody);
  const plans = await context.locals.db(async (t) => {
    await savePlan(t, { id: user.id, clientAddress: clientAddress(context) }, initiativeId, body);
    return plansOf(t, initiativeId);
  });
  return json({ current: plans[0] ?? null, history: plans.slice(1) });
});
