import { listAuditEvents } from '@/features/audit/audit.server';
import { AuditEventsQuery } from '@/features/audit/audit.schema';
import { authorize, requireMember } from '@/lib/server/authorize';
import { endpoint, json, parseQuery, uuidParam } from '@/lib/server/http';

/**
 * GET /api/initiatives/{initiativeId}/audit-events: one page of the initiative's audit
 * trail, newest first, filtered by area or action, actor, subject and UTC dates.
 * Auditors of the initiative only. Reading the trail is not itself an event; exporting is.
 */
export const GET = endpoint(async ({ locals, params, url }) => {
  const initiativeId = uuidParam(params.initiativeId, 'That initiative');
  requireMember(locals.user, initiativeId);
  authorize(locals.user, 'read', 'AuditTrail', { initiativeId });
  const { page, pageSize, ...filter } = parseQuery(url, AuditEventsQuery);
  const { events, total } = await locals.db((t) => listAuditEvents(t, { initiativeId }, filter, { page, pageSize }));
  return json({ events, total, page, pageSize });
});
