/**
 * The audit trail's helpers. Events are appended inside the caller's transaction, so an
 * action and its event commit or roll back together. The database links each event into
 * the hash chain (policies/rls/002_access_and_audit.sql): the application cannot set the
 * hash, the position or the time, and cannot change or remove an event.
 */
import { QueryTypes, type Transaction } from 'sequelize';
import { sequelize } from '../../lib/server/db';

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

export interface ChainReport {
  /** Events checked before the first broken link (all of them when intact). */
  checked: number;
  intact: boolean;
  headPosition: number | null;
  headHash: string | null;
  broken: { position: number; eventId: number; reason: string } | null;
}

/**
 * Recomputes every event's hash and link in chain order and reports the first broken
 * link. The check runs in the database and returns positions, never content.
 */
export async function verifyAuditChain(transaction: Transaction): Promise<ChainReport> {
  const [row] = await sequelize.query<{
    checked: string; head_position: string | null; head_hash: string | null;
    broken_position: string | null; broken_id: string | null; reason: string | null;
  }>('SELECT * FROM app_verify_audit_chain()', { type: QueryTypes.SELECT, transaction });
  const broken = row.broken_position
    ? { position: Number(row.broken_position), eventId: Number(row.broken_id), reason: row.reason ?? '' }
    : null;
  return {
    checked: Number(row.checked),
    intact: broken === null,
    headPosition: row.head_position === null ? null : Number(row.head_position),
    headHash: row.head_hash,
    broken,
  };
}
