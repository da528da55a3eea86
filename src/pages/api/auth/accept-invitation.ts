import { SetPasswordBody } from '@/features/auth/auth.schema';
import { acceptInvitation } from '@/features/auth/auth.server';
import { clientAddress, endpoint, noContent, parseBody } from '@/lib/server/http';

/** POST /api/auth/accept-invitation: sets the password, activates and signs in (204). */
export const POST = endpoint(async (context) => {
  const body = await parseBody(context.request, SetPasswordBody);
  await acceptInvitation(context.cookies, body.token, body.password, {
    address: clientAddress(context),
    userAgent: context.request.headers.get('user-agent'),
  });
  return noContent();
});
