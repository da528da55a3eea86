import { mailChoiceOf, setMailChoice } from '@/features/notifications/notificationMail.server';
import { MailSettingBody } from '@/features/notifications/notifications.schema';
import { endpoint, json, parseBody, requireUser } from '@/lib/server/http';

/** GET /api/me/notifications/settings: how the caller wants notification e-mail. */
export const GET = endpoint(async ({ locals }) => {
  const user = requireUser(locals);
  return json({ mail: await locals.db((t) => mailChoiceOf(t, user.id)) });
});

/** PUT /api/me/notifications/settings: immediate, daily or none. */
export const PUT = endpoint(async (context) => {
  const user = requireUser(context.locals);
  const { mail } = await parseBody(context.request, MailSettingBody);
  await context.locals.db((t) => setMailChoice(t, user.id, mail));
  return json({ mail });
});
