import { registerModifier, registerOf } from '@/features/planning/planning.server';
import { RegisterBody } from '@/features/planning/planning.schema';
import { authorize, requireMember } from '@/lib/server/authorize';
import { clientAddress, endpoint, json, parseBody, requireUser, uuidParam } from '@/lib/server/http';

/** GET /api/initiatives/{initiativeId}/prespecified-modifiers: the register, oldest first, withdrawn entries marked. Every member. */
export const GET = endpoint(async ({ locals, params }) => {
  const initiativeId = uuidParam(params.initiativeId, 'That initiative');
  requireMember(locals.user, initiativeId);
  authorize(locals.user, 'read', 'Plan', { initiativeId });
  return json(await locals.db((t) => registerOf(t, initiativeId)));
});

/** POST /api/initiatives/{initiativeId}/prespecified-modifiers: register a modifier with its predicted direction, stamped now (analysts). */
export const POST = endpoint(async (context) => {
  const user = requireUser(context.locals);
  const initiativeId = uuidParam(context.params.initiativeId, 'That initiative');
  requireMember(user, initiativeId);
  authorize(user, 'create', 'Plan', { initiativeId });
  const body = await parseBody(context.request, RegisterBody);
  const id = await context.locals.db((t) => registerModifier(t, { id: user.id, clientAddress: clientAddress(context) }, initiativeId, body));
  return json({ id }, 201);
});
