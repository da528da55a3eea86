import { exportAuditEvents, recordAudit } from '@/features/audit/audit.server';
import { AuditExportQuery } from '@/features/audit/audit.schema';
import { auditCsv, auditJson } from '@/features/audit/auditExport';
import { authorize } from '@/lib/server/authorize';
import { attachment, clientAddress, endpoint, parseQuery, requireUser } from '@/lib/server/http';

/**
 * GET /api/admin/audit-events/export?format=csv|json: every matching event outside any
 * initiative, in chain order, caution first. Administrators; the export is audited.
 */
export const GET = endpoint(async (context) => {
  const user = requireUser(context.locals);
  authorize(user, 'manage', 'User');
  const { format, ...filter } = parseQuery(context.url, AuditExportQuery);
  const body = await context.locals.db(async (t) => {
    const events = await exportAuditEvents(t, { outsideInitiatives: true }, filter);
    await recordAudit(t, {
      action: 'audit.exported', actorId: user.id, clientAddress: clientAddress(context),
      details: { scope: 'outside initiatives', format, filter, count: events.length, lastPosition: events.at(-1)?.position ?? null },
    });
    const meta = {
      initiative: { id: 'none', name: 'Events outside any initiative' }, filter,
      exportedAt: new Date().toISOString(), exportedBy: `${user.displayName} <${user.email}>`,
    };
    return format === 'csv' ? auditCsv(meta, events) : auditJson(meta, events);
  });
  return attachment(body, format, `crossgrain-audit-accounts-${new Date().toISOString().slice(0, 10)}.${format}`);
});
