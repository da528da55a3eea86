import { SignInBody } from '@/features/auth/auth.schema';
import { signIn } from '@/features/auth/auth.server';
import { clientAddress, endpoint, noContent, parseBody } from '@/lib/server/http';

/** POST /api/auth/sign-in: checks the credentials and sets the session cookie (204). */
export const POST = endpoint(async (context) => {
  const body = await parseBody(context.request, SignInBody);
  await signIn(context.cookies, body, { address: clientAddress(context), userAgent: context.request.headers.get('user-agent') });
  return noContent();
});
