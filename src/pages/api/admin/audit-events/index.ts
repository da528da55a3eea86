import { listAuditEvents } from '@/features/audit/audit.server';
import { AuditEventsQuery } from '@/features/audit/audit.schema';
import { authorize } from '@/lib/server/authorize';
import { endpoint, json, parseQuery, requireUser } from '@/lib/server/http';

/**
 * GET /api/admin/audit-events: one page of the events outside any initiative (sign-ins and
 * failed sign-ins, invitations, password resets, account changes, API tokens), newest
 * first, with the same filters as an initiative's trail. Administrators.
 */
export const GET = endpoint(async ({ locals, url }) => {
  authorize(requireUser(locals), 'manage', 'User');
  const { page, pageSize, ...filter } = parseQuery(url, AuditEventsQuery);
  const { events, total } = await locals.db((t) => listAuditEvents(t, { outsideInitiatives: true }, filter, { page, pageSize }));
  return json({ events, total, page, pageSize });
});
