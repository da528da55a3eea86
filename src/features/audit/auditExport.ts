/**
 * An initiative's audit trail as a file: CSV (formula-injection safe, caution first) or
 * JSON. Each event keeps its chain position, previous hash and hash, so a reader can
 * match it against the database or a checkpoint; an export filtered to one initiative is
 * not itself a contiguous chain (other initiatives' events sit between its positions).
 */
import { CAUTION_VERSION, STANDING_CAUTION } from '@/lib/cautions';
import { csvRecord } from '@/lib/csv';
import type { AuditEventsFilter, AuditEventView } from './audit.schema';

export interface AuditExportMeta {
  initiative: { id: string; name: string };
  filter: AuditEventsFilter;
  exportedAt: string;
  exportedBy: string;
}

export const AUDIT_CSV_COLUMNS = [
  'position', 'occurred_at_utc', 'actor_name', 'actor_email', 'actor_role', 'action', 'subject_type', 'subject_id',
  'client_address', 'details', 'prev_hash', 'hash',
] as const;

/** The filter in words, e.g. "action run; from 2026-11-01" ("none" when unfiltered). */
export function filterInWords(filter: AuditEventsFilter): string {
  const parts = [
    filter.action && `action ${filter.action}`,
    filter.actor && `actor ${filter.actor}`,
    filter.subject && `subject ${filter.subject}`,
    filter.from && `from ${filter.from}`,
    filter.to && `to ${filter.to}`,
  ].filter(Boolean);
  return parts.length ? parts.join('; ') : 'none';
}

export function auditCsv(meta: AuditExportMeta, events: readonly AuditEventView[]): string {
  const width = AUDIT_CSV_COLUMNS.length;
  const pad = (fields: string[]) => [...fields, ...Array<string>(width - fields.length).fill('')];
  let out = '';
  out += csvRecord(pad(['Caution', STANDING_CAUTION]));
  out += csvRecord(pad(['Caution version', CAUTION_VERSION]));
  out += csvRecord(pad(['Initiative', `${meta.initiative.name} (${meta.initiative.id})`]));
  out += csvRecord(pad(['Filter', filterInWords(meta.filter)]));
  out += csvRecord(pad(['Exported', `${meta.exportedAt} by ${meta.exportedBy}`]));
  out += csvRecord(pad(['Events', String(events.length)]));
  out += csvRecord(AUDIT_CSV_COLUMNS);
  for (const e of events) {
    out += csvRecord([
      e.position, e.occurredAt, e.actor?.name ?? null, e.actor?.email ?? null, e.actorRole, e.action, e.subjectType, e.subjectId,
      e.clientAddress, JSON.stringify(e.details), e.prevHash, e.hash,
    ]);
  }
  return out;
}

export function auditJson(meta: AuditExportMeta, events: readonly AuditEventView[]): string {
  return `${JSON.stringify(
    {
      caution: STANDING_CAUTION, cautionVersion: CAUTION_VERSION, initiative: meta.initiative, filter: meta.filter,
      exportedAt: meta.exportedAt, exportedBy: meta.exportedBy, count: events.length, events,
    },
    null,
    2,
  )}\n`;
}
