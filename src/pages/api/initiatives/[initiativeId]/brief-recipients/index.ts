import { actorOf } from '@/features/briefs/briefAccess';
import { addRecipient, listRecipients } from '@/features/briefs/briefMail.server';
import { RecipientBody } from '@/features/briefs/briefs.schema';
import { authorize, requireMember } from '@/lib/server/authorize';
import { endpoint, json, parseBody, requireUser, uuidParam } from '@/lib/server/http';

/** GET /api/initiatives/{initiativeId}/brief-recipients: the distribution list. Every member. */
export const GET = endpoint(async ({ locals, params }) => {
  const initiativeId = uuidParam(params.initiativeId, 'That initiative');
  requireMember(locals.user, initiativeId);
  return json(await locals.db((t) => listRecipients(t, initiativeId)));
});

/** POST /api/initiatives/{initiativeId}/brief-recipients: add a name and address (analysts). */
export const POST = endpoint(async (context) => {
  const user = requireUser(context.locals);
  const initiativeId = uuidParam(context.params.initiativeId, 'That initiative');
  requireMember(user, initiativeId);
  const body = await parseBody(context.request, RecipientBody);
  authorize(user, 'publish', 'Brief', { initiativeId });
  const id = await context.locals.db((t) => addRecipient(t, actorOf(user, context), initiativeId, body));
  return json({ id }, 201);
});
