/**
 * The audit trail's helpers. Events are appended inside the caller's transaction, so an
 * action and its event commit or roll back together. The database links each event into
 * the hash chain (policies/rls/002_access_and_audit.sql): the application cannot set the
 * hash, the position or the time, and cannot change or remove an event.
 */
import { QueryTypes, type Transaction } from 'sequelize';
import { sequelize } from '../../lib/server/db';
import { CHECKPOINT_FORMAT, type AuditCheckpoint, type AuditEventsFilter, type AuditEventView, type ChainReport } from './audit.schema';

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
  'audit.exported',
  'review.submitted',
  'review.signed-off',
  'review.sent-back',
  'review.commented',
  'brief.drafted',
  'brief.published',
  'brief.corrected',
  'brief.retracted',
  'brief.downloaded',
  'brief.distributed',
  'brief.settings-changed',
  'brief.recipient-added',
  'brief.recipient-removed',
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

// ---------------------------------------------------------------------------------------
// Reading an initiative's trail (auditors). Row-level security decides what is visible;
// these queries only filter and page within it.
// ---------------------------------------------------------------------------------------

interface AuditRow {
  chain_position: string; occurred_at: Date; actor_id: string | null; actor_name: string | null; actor_email: string | null;
  actor_role: string | null; action: string; subject_type: string | null; subject_id: string | null; client_address: string | null;
  details: Record<string, unknown>; prev_hash: string; hash: string;
}

/**
 * Whose events: one initiative's (its auditors read them), or those outside any initiative
 * (sign-ins, invitations, account changes; administrators read them).
 */
export type AuditScope = { initiativeId: string } | { outsideInitiatives: true };

/** The WHERE clause and bind values for a scope's events under a filter. */
function filterSql(scope: AuditScope, filter: AuditEventsFilter): { where: string; bind: unknown[] } {
  const bind: unknown[] = [];
  const clauses: string[] = [];
  if ('initiativeId' in scope) {
    bind.push(scope.initiativeId);
    clauses.push('e.initiative_id = $1');
  } else {
    clauses.push('e.initiative_id IS NULL');
  }
  if (filter.action) {
    bind.push(filter.action, `${filter.action}.%`);
    clauses.push(`(e.action = $${bind.length - 1} OR e.action LIKE $${bind.length})`);
  }
  if (filter.actor) {
    bind.push(filter.actor);
    clauses.push(`e.actor_id = $${bind.length}`);
  }
  if (filter.subject) {
    bind.push(filter.subject);
    clauses.push(`e.subject_id = $${bind.length}`);
  }
  if (filter.from) {
    bind.push(filter.from);
    clauses.push(`e.occurred_at >= ($${bind.length}::date)::timestamp AT TIME ZONE 'UTC'`);
  }
  if (filter.to) {
    bind.push(filter.to);
    clauses.push(`e.occurred_at < ($${bind.length}::date + 1)::timestamp AT TIME ZONE 'UTC'`);
  }
  return { where: clauses.join(' AND '), bind };
}

const EVENT_COLUMNS = `e.chain_position, e.occurred_at, e.actor_id, u.display_name AS actor_name, u.email AS actor_email, e.actor_role,
  e.action, e.subject_type, e.subject_id, e.client_address, e.details, e.prev_hash, e.hash`;

function toView(row: AuditRow): AuditEventView {
  return {
    position: Number(row.chain_position),
    occurredAt: new Date(row.occurred_at).toISOString(),
    actor: row.actor_id ? { id: row.actor_id, name: row.actor_name ?? '', email: row.actor_email ?? '' } : null,
    actorRole: row.actor_role,
    action: row.action,
    subjectType: row.subject_type,
    subjectId: row.subject_id,
    clientAddress: row.client_address,
    details: row.details ?? {},
    prevHash: row.prev_hash,
    hash: row.hash,
  };
}

/** One page of a scope's events, newest first, and how many match in all. */
export async function listAuditEvents(
  transaction: Transaction, scope: AuditScope, filter: AuditEventsFilter, paging: { page: number; pageSize: number },
): Promise<{ events: AuditEventView[]; total: number }> {
  const { where, bind } = filterSql(scope, filter);
  const [counted] = await sequelize.query<{ total: string }>(`SELECT count(*) AS total FROM audit_events e WHERE ${where}`, {
    bind, type: QueryTypes.SELECT, transaction,
  });
  const rows = await sequelize.query<AuditRow>(
    `SELECT ${EVENT_COLUMNS} FROM audit_events e LEFT JOIN users u ON u.id = e.actor_id
     WHERE ${where} ORDER BY e.chain_position DESC LIMIT $${bind.length + 1} OFFSET $${bind.length + 2}`,
    { bind: [...bind, paging.pageSize, (paging.page - 1) * paging.pageSize], type: QueryTypes.SELECT, transaction },
  );
  return { events: rows.map(toView), total: Number(counted.total) };
}

/** Every matching event, oldest first (chain order), for an export. */
export async function exportAuditEvents(transaction: Transaction, scope: AuditScope, filter: AuditEventsFilter): Promise<AuditEventView[]> {
  const { where, bind } = filterSql(scope, filter);
  const rows = await sequelize.query<AuditRow>(
    `SELECT ${EVENT_COLUMNS} FROM audit_events e LEFT JOIN users u ON u.id = e.actor_id WHERE ${where} ORDER BY e.chain_position`,
    { bind, type: QueryTypes.SELECT, transaction },
  );
  return rows.map(toView);
}

/** The people who appear in a scope's trail, for the actor filter. */
export async function auditActors(transaction: Transaction, scope: AuditScope): Promise<{ id: string; name: string }[]> {
  const { where, bind } = filterSql(scope, {});
  return sequelize.query<{ id: string; name: string }>(
    `SELECT DISTINCT u.id, u.display_name AS name FROM audit_events e JOIN users u ON u.id = e.actor_id WHERE ${where} ORDER BY name`,
    { bind, type: QueryTypes.SELECT, transaction },
  );
}
