import { CreateApiTokenBody } from '@/features/auth/auth.schema';
import { createApiToken, listApiTokens } from '@/features/auth/apiTokens.server';
import { forbidden } from '@/lib/server/errors';
import { clientAddress, endpoint, json, parseBody, requireUser } from '@/lib/server/http';

/** GET /api/me/tokens: the caller's personal API tokens (never their secrets). */
export const GET = endpoint(async ({ locals }) => {
  const user = requireUser(locals);
  return json(await locals.db((t) => listApiTokens(t, user.id)));
});

/** POST /api/me/tokens: creates a token and returns its secret once (201). */
export const POST = endpoint(async (context) => {
  const { locals } = context;
  const user = requireUser(locals);
  // A token cannot mint further tokens: that needs a signed-in person.
  if (locals.session?.via !== 'cookie') throw forbidden('Create tokens from your profile page while signed in.');
  const body = await parseBody(context.request, CreateApiTokenBody);
  const created = await locals.db((t) => createApiToken(t, user.id, body.name, clientAddress(context)));
  return json(created, 201);
});
