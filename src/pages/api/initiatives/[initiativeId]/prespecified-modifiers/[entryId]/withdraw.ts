import { registerOf, withdrawEntry } from '@/features/planning/planning.server';
import { WithdrawBody } from '@/features/planning/planning.schema';
import { authorize, requireMember } from '@/lib/server/authorize';
import { clientAddress, endpoint, json, parseBody, requireUser, uuidParam } from '@/lib/server/http';

/** POST /api/initiatives/{initiativeId}/prespecified-modifiers/{entryId}/withdraw: withdraw an entry with a reason; it stays on the register, marked (analysts). */
export const POST = endpoint(async (context) => {
  const user = requireUser(context.locals);
  const initiativeId = uuidParam(context.params.initiativeId, 'That initiative');
  const entryId = uuidParam(context.params.entryId, 'That register entry');
  requireMember(user, initiativeId);
  authorize(user, 'update', 'Plan', { initiativeId });
  const body = await parseBody(context.request, WithdrawBody);
  return json(await context.locals.db(async (t) => {
    await withdrawEntry(t, { id: user.id, clientAddress: clientAddress(context) }, initiativeId, entryId, body.reason);
    return registerOf(t, initiativeId);
  }));
});
