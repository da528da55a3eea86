import { CreateInitiativeBody } from '@/features/admin/admin.schema';
import { createInitiative, listInitiatives } from '@/features/admin/admin.server';
import { authorize } from '@/lib/server/authorize';
import { clientAddress, endpoint, json, parseBody, requireUser } from '@/lib/server/http';

/** GET /api/admin/initiatives: every initiative (administrators). */
export const GET = endpoint(async ({ locals }) => {
  authorize(requireUser(locals), 'manage', 'Membership');
  return json(await locals.db((t) => listInitiatives(t)));
});

/** POST /api/admin/initiatives: creates an initiative (201). */
export const POST = endpoint(async (context) => {
  const user = requireUser(context.locals);
  authorize(user, 'create', 'Initiative');
  const body = await parseBody(context.request, CreateInitiativeBody);
  const created = await context.locals.db((t) => createInitiative(t, { id: user.id, address: clientAddress(context) }, body));
  return json(created, 201);
});
