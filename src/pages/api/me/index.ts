import type { MeResponse } from '@/features/auth/auth.schema';
import { endpoint, json, requireUser } from '@/lib/server/http';

/** GET /api/me: the signed-in user and their memberships. */
export const GET = endpoint(({ locals }) => {
  const user = requireUser(locals);
  const body: MeResponse = {
    id: user.id,
    email: user.email,
    displayName: user.displayName,
    isAdmin: user.isAdmin,
    memberships: user.memberships.map((m) => ({ initiativeId: m.initiativeId, initiativeName: m.initiativeName, role: m.role })),
  };
  return json(body);
});
