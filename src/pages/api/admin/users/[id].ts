import { UpdateUserBody } from '@/features/admin/admin.schema';
import { setUserStatus } from '@/features/admin/admin.server';
import { authorize } from '@/lib/server/authorize';
import { clientAddress, endpoint, noContent, parseBody, requireUser, uuidParam } from '@/lib/server/http';

/** PATCH /api/admin/users/{id}: deactivates (ending all sessions) or reactivates (204). */
export const PATCH = endpoint(async (context) => {
  const user = requireUser(context.locals);
  authorize(user, 'update', 'User');
  const userId = uuidParam(context.params.id, 'That person');
  const body = await parseBody(context.request, UpdateUserBody);
  await context.locals.db((t) => setUserStatus(t, { id: user.id, address: clientAddress(context) }, userId, body.status));
  return noContent();
});
