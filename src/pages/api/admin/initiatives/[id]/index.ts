import { UpdateInitiativeBody } from '@/features/admin/admin.schema';
import { updateInitiative } from '@/features/admin/admin.server';
import { authorize } from '@/lib/server/authorize';
import { clientAddress, endpoint, noContent, parseBody, requireUser, uuidParam } from '@/lib/server/http';

/** PATCH /api/admin/initiatives/{id}: changes the description or the row-preview setting (204). */
export const PATCH = endpoint(async (context) => {
  const user = requireUser(context.locals);
  authorize(user, 'manage', 'Membership');
  const initiativeId = uuidParam(context.params.id, 'That initiative');
  const body = await parseBody(context.request, UpdateInitiativeBody);
  await context.locals.db((t) => updateInitiative(t, { id: user.id, address: clientAddress(context) }, initiativeId, body));
  return noContent();
});
