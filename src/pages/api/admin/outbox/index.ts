import { notFound, unauthenticated } from '@/lib/server/errors';
import { endpoint, json, parseQuery } from '@/lib/server/http';
import { listMessages, outboxAccess, OutboxQuery } from '@/features/admin/outbox';

/**
 * GET /api/admin/outbox?page=&pageSize=: the messages the local mail server has kept,
 * newest first. Administrators only, and only in local mail mode (404 otherwise).
 */
export const GET = endpoint(async ({ locals, url }) => {
  const access = outboxAccess(locals.user);
  if (access === 'signed-out') throw unauthenticated();
  if (access === 'hidden') throw notFound('That page');
  const query = parseQuery(url, OutboxQuery);
  return json(await listMessages(query));
});
