import { notFound, unauthenticated } from '@/lib/server/errors';
import { endpoint, json } from '@/lib/server/http';
import { outboxAccess, readMessage } from '@/features/admin/outbox';

/**
 * GET /api/admin/outbox/:id: one kept message, parsed (from, to, subject, date, text,
 * html, links). 400 for a malformed id, 404 when there is no such message, and 404 for
 * everyone but administrators in local mail mode.
 */
export const GET = endpoint(async ({ locals, params }) => {
  const access = outboxAccess(locals.user);
  if (access === 'signed-out') throw unauthenticated();
  if (access === 'hidden') throw notFound('That page');
  return json(await readMessage(params.id ?? ''));
});
