/**
 * The audit API's shapes: the chain report, and the checkpoint file an auditor or an
 * operator keeps outside the database (format `crossgrain-audit-checkpoint/1`).
 */
import { z } from 'zod';

export const CHECKPOINT_FORMAT = 'crossgrain-audit-checkpoint/1';

export const AuditCheckpoint = z
  .object({
    format: z.literal(CHECKPOINT_FORMAT),
    /** Position of the newest event when the checkpoint was taken (1 is the first event). */
    position: z.number().int().min(1),
    /** That event's SHA-256, as the chain stores it (64 lower-case hexadecimal digits). */
    hash: z.string().regex(/^[0-9a-f]{64}$/, 'The hash must be 64 lower-case hexadecimal digits.'),
    /** When that event was written (UTC), and when the checkpoint was taken. */
    eventAt: z.iso.datetime(),
    takenAt: z.iso.datetime(),
  })
  .meta({ id: 'AuditCheckpoint' });
export type AuditCheckpoint = z.infer<typeof AuditCheckpoint>;

/**
 * Reads a checkpoint file's text: one checkpoint as JSON, or one per line (JSON Lines, as
 * `audit:checkpoint >> file` builds up), in which case the newest, last line is used.
 * Answers the checkpoint or a sentence saying what is wrong, for the browser and the
 * command line alike.
 */
export function parseCheckpointText(text: string): { checkpoint: AuditCheckpoint } | { problem: string } {
  const lines = text.split('\n').map((line) => line.trim()).filter(Boolean);
  const jsonLines = lines.length > 1 && lines.every((line) => line.startsWith('{') && line.endsWith('}'));
  let raw: unknown;
  try {
    raw = JSON.parse(jsonLines ? lines.at(-1)! : lines.join('\n'));
  } catch {
    return { problem: 'it is not JSON; a checkpoint file holds the JSON that Crossgrain exported' };
  }
  const parsed = AuditCheckpoint.safeParse(raw);
  if (!parsed.success) {
    return { problem: `it is not a Crossgrain audit checkpoint (${parsed.error.issues.map((issue) => `${issue.path.join('.') || 'file'}: ${issue.message}`).join('; ')})` };
  }
  return { checkpoint: parsed.data };
}

export const VerifyBody = z
  .object({
    /** A checkpoint exported earlier: the chain must still hold its head, unchanged. */
    checkpoint: AuditCheckpoint.optional(),
  })
  .meta({ id: 'AuditVerifyRequest' });

export const CheckpointQuery = z.object({
  /** `1` answers with Content-Disposition: attachment, for saving the file. */
  download: z.enum(['0', '1']).optional(),
});

export const ChainReport = z
  .object({
    checked: z.number().int(),
    intact: z.boolean(),
    headPosition: z.number().int().nullable(),
    headHash: z.string().nullable(),
    broken: z.object({ position: z.number().int(), eventId: z.number().int(), reason: z.string() }).nullable(),
    checkpoint: z
      .object({
        position: z.number().int(),
        takenAt: z.string(),
        holds: z.boolean(),
        /** What the comparison found, in words. */
        finding: z.string(),
      })
      .nullable(),
  })
  .meta({ id: 'AuditChainReport' });
export type ChainReport = z.infer<typeof ChainReport>;

/** The areas an auditor filters the trail by (the part of the action before the dot). */
export const AUDIT_AREAS = ['extract', 'analysis', 'run', 'review', 'brief', 'membership', 'audit'] as const;

/** The areas of the events outside any initiative, which administrators read. */
export const ACCOUNT_AUDIT_AREAS = ['auth', 'user', 'token', 'audit'] as const;

const dateOnly = z.iso.date({ message: 'Use a date as YYYY-MM-DD.' });
const isoDay = /^\d{4}-\d{2}-\d{2}$/;

/** Filters for an initiative's trail; dates are UTC days, both ends included. */
const filterFields = {
  /** An area (`run`) or one action (`run.finished`). */
  action: z.string().regex(/^[a-z][a-z-]*(\.[a-z][a-z-]*)*$/, 'Use an area such as run, or an action such as run.finished.').optional(),
  actor: z.uuid({ message: 'The actor is a user id.' }).optional(),
  /** One subject's id (a run, an analysis, an extract version). */
  subject: z.string().min(1).max(200).optional(),
  from: dateOnly.optional(),
  to: dateOnly.optional(),
};
const datesInOrder: [(f: { from?: string; to?: string }) => boolean, { path: string[]; message: string }] = [
  // Compared only when both are dates: a malformed one has its own message already.
  (f) => !isoDay.test(f.from ?? '') || !isoDay.test(f.to ?? '') || f.from! <= f.to!,
  { path: ['to'], message: 'The end date comes before the start date.' },
];

export const AuditEventsFilter = z.object(filterFields).refine(...datesInOrder);
export type AuditEventsFilter = z.infer<typeof AuditEventsFilter>;

export const AuditEventsQuery = z
  .object({
    ...filterFields,
    page: z.coerce.number().int().min(1).default(1),
    pageSize: z.coerce.number().int().min(10).max(200).default(50),
  })
  .refine(...datesInOrder)
  .meta({ id: 'AuditEventsQuery' });

export const AuditExportQuery = z
  .object({ ...filterFields, format: z.enum(['csv', 'json']).default('csv') })
  .refine(...datesInOrder)
  .meta({ id: 'AuditExportQuery' });

export const AuditEventView = z
  .object({
    position: z.number().int(),
    occurredAt: z.string(),
    actor: z.object({ id: z.uuid(), name: z.string(), email: z.string() }).nullable(),
    actorRole: z.string().nullable(),
    action: z.string(),
    subjectType: z.string().nullable(),
    subjectId: z.string().nullable(),
    clientAddress: z.string().nullable(),
    details: z.record(z.string(), z.unknown()),
    prevHash: z.string(),
    hash: z.string(),
  })
  .meta({ id: 'AuditEvent' });
export type AuditEventView = z.infer<typeof AuditEventView>;

export const AuditEventPage = z
  .object({ events: z.array(AuditEventView), total: z.number().int(), page: z.number().int(), pageSize: z.number().int() })
  .meta({ id: 'AuditEventPage' });
