import { listNotifications } from '@/features/notifications/notifications.server';
import { NotificationsQuery } from '@/features/notifications/notifications.schema';
import { endpoint, json, parseQuery, requireUser } from '@/lib/server/http';

/** GET /api/me/notifications: the caller's unread count and latest notifications. */
export const GET = endpoint(async ({ locals, url }) => {
  const user = requireUser(locals);
  const { limit } = parseQuery(url, NotificationsQuery);
  return json(await locals.db((t) => listNotifications(t, user.id, limit)));
});
