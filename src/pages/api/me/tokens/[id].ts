import { revokeApiToken } from '@/features/auth/apiTokens.server';
import { clientAddress, endpoint, noContent, requireUser, uuidParam } from '@/lib/server/http';

/** DELETE /api/me/tokens/{id}: revokes one of the caller's tokens (204). */
export const DELETE = endpoint(async (context) => {
  const user = requireUser(context.locals);
  const tokenId = uuidParam(context.params.id, 'That token');
  await context.locals.db((t) => revokeApiToken(t, user.id, tokenId, clientAddress(context)));
  return noContent();
});
