import { checkPlan } from '@/features/planning/planning.server';
import { PlanCheckBody } from '@/features/planning/planning.schema';
import { authorize, requireMember } from '@/lib/server/authorize';
import { endpoint, json, parseBody, requireUser, uuidParam } from '@/lib/server/http';

/**
 * POST /api/initiatives/{initiativeId}/plan/check: the calculator. The closed-form rows for
 * 80 % and 90 % power and the power at `rows`; with `simulate`, the engine's seeded
 * simulation at those rows (or at the rows for 80 %). Saves nothing. Every member.
 */
export const POST = endpoint(async (context) => {
  const user = requireUser(context.locals);
  const initiativeId = uuidParam(context.params.initiativeId, 'That initiative');
  requireMember(user, initiativeId);
  authorize(user, 'read', 'Plan', { initiativeId });
  const body = await parseBody(context.request, PlanCheckBody);
  return json(checkPlan(body.inputs, body.rows, body.simulate));
});
