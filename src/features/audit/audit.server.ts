/**
 * The audit trail's helpers. Events are appended inside the caller's transaction, so an
 * action and its event commit or roll back together. The database links each event into
 * the hash chain (policies/rls/002_access_and_audit.sql): the application cannot set the
 * hash, the position or the time, and cannot change or remove an event.
 */
import { QueryTypes, type Transaction } from 'sequelize';
import { sequelize } from '../../lib/server/db';
import { CHECKPOINT_FORMAT, type AuditCheckpoint, type ChainReport } from './audit.schema';

/** Every kind of event, as `area.verb`. */
export const AUDIT_ACTIONS = [
  'auth.sign-in',
  'auth.sign-in-failed',
  'auth.sign-out',
  'auth.invitation-sent',
  'auth.invitation-accepted',
  'auth.password-reset-requested',
  'auth.password-reset',
  'user.deactivated',
  'user.reactivated',
  'membership.added',
  'membership.role-changed',
  'membership.removed',
  'initiative.created',
  'initiative.updated',
  'token.created',
  'token.revoked',
  'token.used',
  'audit.verified',
  'audit.checkpoint-exported',
] as const;
export type AuditAction = (typeof AUDIT_ACTIONS)[number] | `${string}.${string}`;

export interface AuditEventInput {
  action: AuditAction;
  /** Who acted; null for anonymous events such as a failed sign-in. */
  actorId: string | null;
  subjectType?: string;
  subjectId?: string;
  initiativeId?: string | null;
  clientAddress?: string | null;
  /** Identifiers, counts and hashes; never passwords, tokens or cohort values. */
  details?: Record<string, unknown>;
}

/** Appends one event in the caller's transaction. */
export async function recordAudit(transaction: Transaction, event: AuditEventInput): Promise<void> {
  await sequelize.query(
    `INSERT INTO audit_events (actor_id, action, subject_type, subject_id, initiative_id, client_address, details)
     VALUES (:actorId, :action, :subjectType, :subjectId, :initiativeId, :clientAddress, CAST(:details AS jsonb))`,
    {
      replacements: {
        actorId: event.actorId,
        action: event.action,
        subjectType: event.subjectType ?? null,
        subjectId: event.subjectId ?? null,
        initiativeId: event.initiativeId ?? null,
        clientAddress: event.clientAddress ?? null,
        details: JSON.stringify(event.details ?? {}),
      },
      transaction,
    },
  );
}

/**
 * Recomputes every event's hash and link in chain order and reports the first broken
 * link; given a checkpoint exported earlier, also checks that the chain still holds the
 * checkpoint's head with the same hash (a chain whose newest events were removed still
 * links up, so only a checkpoint kept elsewhere reveals truncation). The checks run in
 * the database and return positions and hashes, never content.
 */
export async function verifyAuditChain(transaction: Transaction, checkpoint?: AuditCheckpoint): Promise<ChainReport> {
  const [row] = await sequelize.query<{
    checked: string; head_position: string | null; head_hash: string | null;
    broken_position: string | null; broken_id: string | null; reason: string | null;
  }>('SELECT * FROM app_verify_audit_chain()', { type: QueryTypes.SELECT, transaction });
  const broken = row.broken_position
    ? { position: Number(row.broken_position), eventId: Number(row.broken_id), reason: row.reason ?? '' }
    : null;
  const headPosition = row.head_position === null ? null : Number(row.head_position);
  const against = checkpoint ? await compareWithCheckpoint(transaction, checkpoint, headPosition) : null;
  return {
    checked: Number(row.checked),
    intact: broken === null && (against?.holds ?? true),
    headPosition,
    headHash: row.head_hash,
    broken,
    checkpoint: against,
  };
}

async function compareWithCheckpoint(transaction: Transaction, checkpoint: AuditCheckpoint, headPosition: number | null): Promise<NonNullable<ChainReport['checkpoint']>> {
  const [link] = await sequelize.query<{ link_hash: string }>('SELECT link_hash FROM app_audit_chain_link(:position)', {
    replacements: { position: checkpoint.position }, type: QueryTypes.SELECT, transaction,
  });
  const base = { position: checkpoint.position, takenAt: checkpoint.takenAt };
  if (!link) {
    const ends = headPosition === null ? 'the trail holds no events' : `the chain now ends at position ${headPosition}`;
    return { ...base, holds: false, finding: `Truncated: the checkpoint of ${checkpoint.takenAt} records an event at position ${checkpoint.position}, but ${ends}.` };
  }
  if (link.link_hash !== checkpoint.hash) {
    return { ...base, holds: false, finding: `Rewritten: the event at position ${checkpoint.position} no longer has the hash the checkpoint of ${checkpoint.takenAt} recorded, so the chain up to it was replaced.` };
  }
  const added = (headPosition ?? checkpoint.position) - checkpoint.position;
  return { ...base, holds: true, finding: `Holds: the event at position ${checkpoint.position} still has the checkpoint's hash; ${added.toLocaleString('en-GB')} event${added === 1 ? '' : 's'} added since.` };
}

/** The chain's head now, as a checkpoint to keep outside the database; null while the trail is empty. */
export async function takeCheckpoint(transaction: Transaction): Promise<AuditCheckpoint | null> {
  const [head] = await sequelize.query<{ head_position: string; head_hash: string; head_at: Date }>('SELECT * FROM app_audit_chain_head()', {
    type: QueryTypes.SELECT, transaction,
  });
  if (!head) return null;
  return {
    format: CHECKPOINT_FORMAT,
    position: Number(head.head_position),
    hash: head.head_hash,
    eventAt: new Date(head.head_at).toISOString(),
    takenAt: new Date().toISOString(),
  };
}

/**
 * Who may verify the chain and export checkpoints: auditors of any initiative, and
 * administrators. Both read only positions and hashes, never events.
 */
export function mayCheckChain(user: { isAdmin: boolean; memberships: { role: string }[] }): boolean {
  return user.isAdmin || user.memberships.some((m) => m.role === 'auditor');
}
