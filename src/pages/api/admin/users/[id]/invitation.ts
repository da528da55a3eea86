import { resendInvitation, revokeInvitation } from '@/features/admin/invitations.server';
import { authorize } from '@/lib/server/authorize';
import { clientAddress, endpoint, json, noContent, requireUser, uuidParam } from '@/lib/server/http';
import { logger } from '@/lib/server/logger';

/** POST /api/admin/users/{id}/invitation: sends a new invitation link; the old one stops working (200). */
export const POST = endpoint(async (context) => {
  const user = requireUser(context.locals);
  authorize(user, 'create', 'User');
  const userId = uuidParam(context.params.id, 'That person');
  const resent = await context.locals.db((t) => resendInvitation(t, { id: user.id, address: clientAddress(context) }, userId));
  let mailed = true;
  try {
    await resent.send();
  } catch (error) {
    mailed = false;
    logger.warn({ err: error, userId }, 'invitation e-mail not sent');
  }
  return json({ userId, mailed }, 200);
});

/** DELETE /api/admin/users/{id}/invitation: revokes an open invitation; its link stops working (204). */
export const DELETE = endpoint(async (context) => {
  const user = requireUser(context.locals);
  authorize(user, 'update', 'User');
  const userId = uuidParam(context.params.id, 'That person');
  await context.locals.db((t) => revokeInvitation(t, { id: user.id, address: clientAddress(context) }, userId));
  return noContent();
});
