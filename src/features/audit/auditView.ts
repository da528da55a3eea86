/**
 * How the audit trail page words an event: a link to its subject where there is a page
 * for it, and its details as short "name: value" pairs (hashes cut to 12 digits, ids to 8, the
 * caution text named rather than repeated). The export carries everything in full.
 */
import { flattenIssues } from '@/lib/server/http';
import { AuditEventsQuery, type AuditEventView, type AuditEventsFilter } from './audit.schema';

/**
 * A trail page's query string as filter and page. The page's form sends empty fields for
 * filters left blank, which mean "any"; bad values come back as field problems.
 */
export function trailQuery(url: URL): { ok: boolean; filter: AuditEventsFilter; page: number; pageSize: number; problems: { path: string; message: string }[] } {
  const given = Object.fromEntries([...url.searchParams].filter(([, value]) => value.trim() !== ''));
  const query = AuditEventsQuery.safeParse(given);
  if (!query.success) return { ok: false, filter: {}, page: 1, pageSize: 50, problems: flattenIssues(query.error) };
  const { page, pageSize, ...filter } = query.data;
  return { ok: true, filter, page, pageSize, problems: [] };
}

const SUBJECT_PAGES: Record<string, (id: string) => string> = {
  run: (id) => `/runs/${id}`,
  analysis: (id) => `/analyses/${id}`,
  extract: (id) => `/extracts/${id}`,
  brief: (id) => `/briefs/${id}`,
};

export function subjectHref(event: Pick<AuditEventView, 'subjectType' | 'subjectId'>): string | undefined {
  const page = event.subjectType ? SUBJECT_PAGES[event.subjectType] : undefined;
  return page && event.subjectId ? page(encodeURIComponent(event.subjectId)) : undefined;
}

const HASH = /^[0-9a-f]{64}$/;
const UUID = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/;
const MAX_TEXT = 80;

function valueText(value: unknown): string {
  if (typeof value === 'string') {
    if (HASH.test(value)) return `${value.slice(0, 12)}…`;
    if (UUID.test(value)) return `${value.slice(0, 8)}…`;
    return value.length > MAX_TEXT ? `${value.slice(0, MAX_TEXT - 1)}…` : value;
  }
  if (typeof value === 'number' || typeof value === 'boolean') return String(value);
  const json = JSON.stringify(value);
  return json.length > MAX_TEXT ? `${json.slice(0, MAX_TEXT - 1)}…` : json;
}

/** The details in one line, e.g. "format: csv · specHash: 40146a6c210d…". */
export function eventSummary(event: Pick<AuditEventView, 'details'>): string {
  const parts: string[] = [];
  for (const [key, value] of Object.entries(event.details)) {
    if (value === null || value === undefined || value === '') continue;
    if (key === 'cautionText') {
      parts.push('caution shown');
      continue;
    }
    parts.push(`${key}: ${valueText(value)}`);
  }
  return parts.join(' · ');
}
