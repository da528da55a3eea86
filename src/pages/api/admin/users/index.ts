import { InviteUserBody } from '@/features/admin/admin.schema';
import { inviteUser, listUsers } from '@/features/admin/admin.server';
import { authorize } from '@/lib/server/authorize';
import { clientAddress, endpoint, json, parseBody, requireUser } from '@/lib/server/http';
import { logger } from '@/lib/server/logger';

/** GET /api/admin/users: every account with its memberships (administrators). */
export const GET = endpoint(async ({ locals }) => {
  authorize(requireUser(locals), 'read', 'User');
  return json(await locals.db((t) => listUsers(t)));
});

/** POST /api/admin/users: invites a person by e-mail (201). */
export const POST = endpoint(async (context) => {
  const user = requireUser(context.locals);
  authorize(user, 'create', 'User');
  const body = await parseBody(context.request, InviteUserBody);
  if (body.membership) authorize(user, 'create', 'Membership');
  const invited = await context.locals.db((t) => inviteUser(t, { id: user.id, address: clientAddress(context) }, body));
  let mailed = true;
  try {
    await invited.send();
  } catch (error) {
    mailed = false;
    logger.warn({ err: error, userId: invited.userId }, 'invitation e-mail not sent');
  }
  return json({ userId: invited.userId, mailed }, 201);
});
