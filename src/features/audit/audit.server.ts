/**
 * The audit trail's helpers. Events are appended inside the caller's transaction, so an
 * action and its event commit or roll back together. The database links each event into
 * the hash chain (policies/rls/002_access_and_audit.sql): the application cannot set the
 * hash, the position or the time, and cannot change or remove an event.
 */
import { Op, QueryTypes, type Order, type Transaction, type WhereOptions } from 'sequelize';
import { AuditEvent, User } from '../../../db/models';
import { sequelize } from '@/lib/server/db';
import { CHECKPOINT_FORMAT, type AuditCheckpoint, type AuditEventsFilter, type AuditEventView, type ChainReport } from './audit.schema';

/** Every kind of event, as `area.verb`. */
export const AUDIT_ACTIONS = [
  'auth.sign-in',
  'auth.sign-in-failed',
  'auth.sign-out',
  'auth.invitation-sent',
  'auth.invitation-resent',
  'auth.invitation-revoked',
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
  'review.co-signed',
  'review.signed-off',
  'review.sent-back',
  'review.signature-refused',
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
  'plan.saved',
  'prespecification.registered',
  'prespecification.withdrawn',
  'credibility.rated',
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
  // The audit chain: the table's trigger numbers and links each appended row, so it is a plain INSERT (raw SQL).
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
  // The chain's own check function (SECURITY DEFINER, positions and hashes only): raw SQL.
  const [row] = await sequelize.query<{
    checked: string; head_position: string | null; head_hash: string | null;
    broken_position: string | null; broken_id: string | null; reason: string | null;
  }>('SELECT * FROM app_verify_audit_chain()', { type: QueryTypes.SELECT, transaction });
  const broken = row.broken_position
    ? { position: Number(row.broken_position), eventId: Number(row.broken_id), reason: row.reason ?? '' }
    : null;
  const headPosition = row.head_position === null ? null : Number(row.head_position);
  const against = checkpoint ? await compareWithCheckpoint(transaction, checkpoint, headPosition, broken) : null;
  return {
    checked: Number(row.checked),
    intact: broken === null && (against?.holds ?? true),
    headPosition,
    headHash: row.head_hash,
    broken,
    checkpoint: against,
  };
}

async function compareWithCheckpoint(
  transaction: Transaction,
  checkpoint: AuditCheckpoint,
  headPosition: number | null,
  broken: ChainReport['broken'],
): Promise<NonNullable<ChainReport['checkpoint']>> {
  // The chain's link function (SECURITY DEFINER, positions and hashes only): raw SQL.
  const [link] = await sequelize.query<{ link_hash: string }>('SELECT link_hash FROM app_audit_chain_link(:position)', {
    replacements: { position: checkpoint.position }, type: QueryTypes.SELECT, transaction,
  });
  const base = { position: checkpoint.position, takenAt: checkpoint.takenAt };
  if (!link) {
    const ends = headPosition === null ? 'the trail holds no events' : `the chain now ends at position ${headPosition}`;
    return { ...base, holds: false, finding: `Truncated: the checkpoint of ${checkpoint.takenAt} records an event at position ${checkpoint.position}, but ${ends}.` };
  }
  if (broken) {
    // The chain check stops at the first broken link, so the head it reports is not the
    // trail's: say the chain is broken rather than count events "added since".
    const where = `the chain is broken at position ${broken.position}${broken.reason ? ` (${broken.reason})` : ''}`;
    if (broken.position <= checkpoint.position || link.link_hash !== checkpoint.hash) {
      return { ...base, holds: false, finding: `Broken: ${where}, at or before the checkpoint of ${checkpoint.takenAt} (position ${checkpoint.position}), so the checkpoint does not hold.` };
    }
    return { ...base, holds: false, finding: `Broken: the event at position ${checkpoint.position} still has the checkpoint's hash, but ${where}, after the checkpoint of ${checkpoint.takenAt}.` };
  }
  if (link.link_hash !== checkpoint.hash) {
    return { ...base, holds: false, finding: `Rewritten: the event at position ${checkpoint.position} no longer has the hash the checkpoint of ${checkpoint.takenAt} recorded, so the chain up to it was replaced.` };
  }
  const added = (headPosition ?? checkpoint.position) - checkpoint.position;
  return { ...base, holds: true, finding: `Holds: the event at position ${checkpoint.position} still has the checkpoint's hash; ${added.toLocaleString('en-GB')} event${added === 1 ? '' : 's'} added since.` };
}

/** The chain's head now, as a checkpoint to keep outside the database; null while the trail is empty. */
export async function takeCheckpoint(transaction: Transaction): Promise<AuditCheckpoint | null> {
  // The chain's head function (SECURITY DEFINER, positions and hashes only): raw SQL.
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

/**
 * Whose events: one initiative's (its auditors read them), or those outside any initiative
 * (sign-ins, invitations, account changes; administrators read them).
 */
export type AuditScope = { initiativeId: string } | { outsideInitiatives: true };

const DAY_MS = 86_400_000;
const utcDay = (day: string) => new Date(`${day}T00:00:00.000Z`);

/** The conditions on a scope's events under a filter (dates are UTC days, both ends included). */
function filterWhere(scope: AuditScope, filter: AuditEventsFilter): WhereOptions<AuditEvent> {
  const conditions: WhereOptions<AuditEvent>[] = [{ initiativeId: 'initiativeId' in scope ? scope.initiativeId : null }];
  if (filter.action) conditions.push({ [Op.or]: [{ action: filter.action }, { action: { [Op.like]: `${filter.action}.%` } }] });
  if (filter.actor) conditions.push({ actorId: filter.actor });
  if (filter.subject) conditions.push({ subjectId: filter.subject });
  if (filter.from) conditions.push({ occurredAt: { [Op.gte]: utcDay(filter.from) } });
  if (filter.to) conditions.push({ occurredAt: { [Op.lt]: new Date(utcDay(filter.to).getTime() + DAY_MS) } });
  return { [Op.and]: conditions };
}

/** An event with its actor's name and e-mail, oldest or newest first. */
function eventQuery(scope: AuditScope, filter: AuditEventsFilter, transaction: Transaction, direction: 'ASC' | 'DESC') {
  return {
    where: filterWhere(scope, filter),
    include: [{ model: User, as: 'actor', attributes: ['displayName', 'email'], required: false }],
    order: [['chainPosition', direction]] satisfies Order,
    transaction,
  };
}

function toView(row: AuditEvent): AuditEventView {
  return {
    position: Number(row.chainPosition),
    occurredAt: new Date(row.occurredAt).toISOString(),
    actor: row.actorId ? { id: row.actorId, name: row.actor?.displayName ?? '', email: row.actor?.email ?? '' } : null,
    actorRole: row.actorRole,
    action: row.action,
    subjectType: row.subjectType,
    subjectId: row.subjectId,
    clientAddress: row.clientAddress,
    details: row.details ?? {},
    prevHash: row.prevHash,
    hash: row.hash,
  };
}

/** One page of a scope's events, newest first, and how many match in all. */
export async function listAuditEvents(
  transaction: Transaction, scope: AuditScope, filter: AuditEventsFilter, paging: { page: number; pageSize: number },
): Promise<{ events: AuditEventView[]; total: number }> {
  const total = await AuditEvent.count({ where: filterWhere(scope, filter), transaction });
  const rows = await AuditEvent.findAll({
    ...eventQuery(scope, filter, transaction, 'DESC'), limit: paging.pageSize, offset: (paging.page - 1) * paging.pageSize,
  });
  return { events: rows.map(toView), total };
}

/** Every matching event, oldest first (chain order), for an export. */
export async function exportAuditEvents(transaction: Transaction, scope: AuditScope, filter: AuditEventsFilter): Promise<AuditEventView[]> {
  const rows = await AuditEvent.findAll(eventQuery(scope, filter, transaction, 'ASC'));
  return rows.map(toView);
}

/** The people who appear in a scope's trail, for the actor filter. */
export async function auditActors(transaction: Transaction, scope: AuditScope): Promise<{ id: string; name: string }[]> {
  const events = await AuditEvent.findAll({
    attributes: ['actorId'], where: { [Op.and]: [filterWhere(scope, {}), { actorId: { [Op.ne]: null } }] }, group: ['actorId'], raw: true, transaction,
  });
  const ids = events.flatMap((e) => (e.actorId ? [e.actorId] : []));
  if (ids.length === 0) return [];
  const users = await User.findAll({ attributes: ['id', 'displayName'], where: { id: ids }, order: [['displayName', 'ASC']], transaction });
  return users.map((u) => ({ id: u.id, name: u.displayName }));
}
