import { removeMembership } from '@/features/admin/admin.server';
import { authorize } from '@/lib/server/authorize';
import { clientAddress, endpoint, noContent, requireUser, uuidParam } from '@/lib/server/http';

/** DELETE /api/admin/initiatives/{id}/members/{userId}: removes a person from the initiative (204). */
export const DELETE = endpoint(async (context) => {
  const user = requireUser(context.locals);
  authorize(user, 'manage', 'Membership');
  const initiativeId = uuidParam(context.params.id, 'That initiative');
  const userId = uuidParam(context.params.userId, 'That person');
  await context.locals.db((t) => removeMembership(t, { id: user.id, address: clientAddress(context) }, initiativeId, userId));
  return noContent();
});
