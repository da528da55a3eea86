import { signOut } from '@/features/auth/auth.server';
import { clientAddress, endpoint, noContent } from '@/lib/server/http';

/** POST /api/auth/sign-out: ends the current session (204, also when signed out). */
export const POST = endpoint(async ({ cookies, locals, ...context }) => {
  const current = locals.user && locals.session?.via === 'cookie' ? { userId: locals.user.id, sessionId: locals.session.id } : null;
  await signOut(cookies, current, { address: clientAddress(context), userAgent: context.request.headers.get('user-agent') });
  return noContent();
});
