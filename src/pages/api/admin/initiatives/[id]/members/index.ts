import { SetMembershipBody } from '@/features/admin/admin.schema';
import { listMembers, setMembership } from '@/features/admin/admin.server';
import { authorize } from '@/lib/server/authorize';
import { clientAddress, endpoint, json, noContent, parseBody, requireUser, uuidParam } from '@/lib/server/http';

/** GET /api/admin/initiatives/{id}/members: the initiative's members and roles. */
export const GET = endpoint(async (context) => {
  authorize(requireUser(context.locals), 'read', 'Membership');
  const initiativeId = uuidParam(context.params.id, 'That initiative');
  return json(await context.locals.db((t) => listMembers(t, initiativeId)));
});

/** PUT /api/admin/initiatives/{id}/members: adds a person with a role, or changes their role (204). */
export const PUT = endpoint(async (context) => {
  const user = requireUser(context.locals);
  authorize(user, 'update', 'Membership');
  const initiativeId = uuidParam(context.params.id, 'That initiative');
  const body = await parseBody(context.request, SetMembershipBody);
  await context.locals.db((t) => setMembership(t, { id: user.id, address: clientAddress(context) }, initiativeId, body.userId, body.role));
  return noContent();
});
