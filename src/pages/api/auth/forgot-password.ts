import { ForgotPasswordBody } from '@/features/auth/auth.schema';
import { requestPasswordReset } from '@/features/auth/auth.server';
import { clientAddress, endpoint, json, parseBody } from '@/lib/server/http';

/** POST /api/auth/forgot-password: e-mails a reset link if the account exists; always 202. */
export const POST = endpoint(async (context) => {
  const body = await parseBody(context.request, ForgotPasswordBody);
  await requestPasswordReset(body.email, { address: clientAddress(context), userAgent: context.request.headers.get('user-agent') });
  return json({ message: 'If that address belongs to an active account, a reset link is on its way.' }, 202);
});
