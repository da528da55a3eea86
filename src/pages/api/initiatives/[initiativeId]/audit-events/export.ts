import { exportAuditEvents, recordAudit } from '@/features/audit/audit.server';
import { AuditExportQuery } from '@/features/audit/audit.schema';
import { auditCsv, auditJson } from '@/features/audit/auditExport';
import { getInitiative } from '@/features/initiatives/initiatives.server';
import { authorize, requireMember } from '@/lib/server/authorize';
import { notFound } from '@/lib/server/errors';
import { attachment, clientAddress, endpoint, parseQuery, requireUser, uuidParam } from '@/lib/server/http';

/**
 * GET /api/initiatives/{initiativeId}/audit-events/export?format=csv|json (and the list's
 * filters): every matching event in chain order, as a file with the caution first.
 * Auditors of the initiative only; the export is an audit event naming its filter and count.
 */
export const GET = endpoint(async (context) => {
  const user = requireUser(context.locals);
  const initiativeId = uuidParam(context.params.initiativeId, 'That initiative');
  requireMember(user, initiativeId);
  authorize(user, 'export', 'AuditTrail', { initiativeId });
  const { format, ...filter } = parseQuery(context.url, AuditExportQuery);
  const body = await context.locals.db(async (t) => {
    const initiative = await getInitiative(t, initiativeId);
    if (!initiative) throw notFound('That initiative');
    const events = await exportAuditEvents(t, { initiativeId }, filter);
    await recordAudit(t, {
      action: 'audit.exported', actorId: user.id, subjectType: 'initiative', subjectId: initiativeId, initiativeId,
      clientAddress: clientAddress(context), details: { format, filter, count: events.length, lastPosition: events.at(-1)?.position ?? null },
    });
    const meta = { initiative: { id: initiative.id, name: initiative.name }, filter, exportedAt: new Date().toISOString(), exportedBy: `${user.displayName} <${user.email}>` };
    return format === 'csv' ? auditCsv(meta, events) : auditJson(meta, events);
  });
  const stamp = new Date().toISOString().slice(0, 10);
  return attachment(body, format, `crossgrain-audit-${initiativeId.slice(0, 8)}-${stamp}.${format}`);
});
