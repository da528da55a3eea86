import { markRead } from '@/features/notifications/notifications.server';
import { MarkReadBody } from '@/features/notifications/notifications.schema';
import { endpoint, json, parseBody, requireUser } from '@/lib/server/http';

/** POST /api/me/notifications/read: marks the named notifications (`ids`) or all (`all: true`) read. */
export const POST = endpoint(async (context) => {
  const user = requireUser(context.locals);
  const body = await parseBody(context.request, MarkReadBody);
  return json(await context.locals.db((t) => markRead(t, user.id, body)));
});
