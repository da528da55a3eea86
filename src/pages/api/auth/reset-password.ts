import { SetPasswordBody } from '@/features/auth/auth.schema';
import { resetPassword } from '@/features/auth/auth.server';
import { clientAddress, endpoint, noContent, parseBody } from '@/lib/server/http';

/** POST /api/auth/reset-password: sets a new password from a reset link (204). */
export const POST = endpoint(async (context) => {
  const body = await parseBody(context.request, SetPasswordBody);
  await resetPassword(body.token, body.password, { address: clientAddress(context), userAgent: context.request.headers.get('user-agent') });
  return noContent();
});
