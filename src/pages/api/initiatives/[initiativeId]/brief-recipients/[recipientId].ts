import { actorOf } from '@/features/briefs/briefAccess';
import { removeRecipient } from '@/features/briefs/briefMail.server';
import { authorize, requireMember } from '@/lib/server/authorize';
import { endpoint, noContent, requireUser, uuidParam } from '@/lib/server/http';

/** DELETE /api/initiatives/{initiativeId}/brief-recipients/{recipientId}: take someone off the list (analysts). */
export const DELETE = endpoint(async (context) => {
  const user = requireUser(context.locals);
  const initiativeId = uuidParam(context.params.initiativeId, 'That initiative');
  const recipientId = uuidParam(context.params.recipientId, 'That recipient');
  requireMember(user, initiativeId);
  authorize(user, 'publish', 'Brief', { initiativeId });
  await context.locals.db((t) => removeRecipient(t, actorOf(user, context), initiativeId, recipientId));
  return noContent();
});
