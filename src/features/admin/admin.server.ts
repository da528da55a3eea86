/**
 * Administration: people, initiatives and memberships. Every function runs in the
 * administrator's request transaction (row-level security lets administrators manage
 * initiatives and memberships) and writes its audit event in the same transaction.
 */
import { Op, QueryTypes, type Transaction } from 'sequelize';
import { Initiative, Membership, User } from '../../../db/models';
import { sequelize } from '@/lib/server/db';
import { conflict, notFound, unprocessable } from '@/lib/server/errors';
import { endAllSessions } from '@/lib/server/session';
import { recordAudit } from '../audit/audit.server';
import { issueToken } from '../auth/auth.server';
import { revokeAllApiTokens } from '../auth/apiTokens.server';
import { invitationMail } from './invitations.server';
import type { CreateInitiativeBody, InitiativeItem, InviteUserBody, UpdateInitiativeBody, UserListItem } from './admin.schema';

export interface Actor {
  id: string;
  address: string;
}

const iso = (value: Date | string | null) => (value === null ? null : new Date(value).toISOString());

/** Every account with its memberships, for the people list. */
export async function listUsers(transaction: Transaction): Promise<UserListItem[]> {
  const users = await User.findAll({
    attributes: ['id', 'email', 'displayName', 'status', 'isAdmin', 'lastSignInAt', 'createdAt', 'passwordHash'],
    include: [{
      model: Membership, as: 'memberships', attributes: ['id', 'role'], required: false,
      include: [{ model: Initiative, as: 'initiative', attributes: ['id', 'name'], required: true }],
    }],
    order: [['displayName', 'ASC'], [{ model: Membership, as: 'memberships' }, { model: Initiative, as: 'initiative' }, 'name', 'ASC']],
    transaction,
  });
  return users.map((u) => ({
    id: u.id,
    email: u.email,
    displayName: u.displayName,
    status: u.status,
    activated: Boolean(u.passwordHash),
    isAdmin: u.isAdmin,
    lastSignInAt: iso(u.lastSignInAt),
    createdAt: iso(u.createdAt) ?? '',
    memberships: (u.memberships ?? []).flatMap((m) =>
      m.initiative ? [{ initiativeId: m.initiative.id, initiativeName: m.initiative.name, role: m.role, membershipId: m.id }] : []),
  }));
}

/**
 * Invites a person: creates the account (status `invited`) or, for an invited account
 * that never accepted, issues a fresh link; optionally adds a membership; e-mails a
 * single-use link valid for 7 days. The e-mail goes out after the transaction commits.
 */
export async function inviteUser(transaction: Transaction, actor: Actor, body: InviteUserBody): Promise<{ userId: string; send: () => Promise<unknown> }> {
  const existing = await User.findOne({ attributes: ['id', 'status'], where: { email: body.email }, transaction });
  if (existing && existing.status !== 'invited') {
    throw conflict('That person already has an account. Add them to an initiative from the initiative page instead.');
  }
  let userId = existing?.id;
  if (!userId) {
    const created = await User.create({ email: body.email, displayName: body.displayName, status: 'invited', isAdmin: body.isAdmin }, { transaction });
    userId = created.id;
  }
  if (body.membership) await setMembership(transaction, actor, body.membership.initiativeId, userId, body.membership.role);
  const token = await issueToken(transaction, userId, 'invitation', actor.id);
  await recordAudit(transaction, {
    action: 'auth.invitation-sent',
    actorId: actor.id,
    subjectType: 'user',
    subjectId: userId,
    clientAddress: actor.address,
    details: { resent: Boolean(existing), isAdmin: body.isAdmin, membership: body.membership ?? null },
  });
  const send = invitationMail(body, token);
  return { userId, send };
}

/** Deactivates (ending all sessions) or reactivates an account. */
export async function setUserStatus(transaction: Transaction, actor: Actor, userId: string, status: 'active' | 'deactivated'): Promise<void> {
  if (userId === actor.id && status === 'deactivated') {
    throw unprocessable('cannot-deactivate-self', 'You cannot deactivate your own account.');
  }
  const user = await User.findByPk(userId, { attributes: ['id', 'status', 'passwordHash'], lock: transaction.LOCK.UPDATE, transaction });
  if (!user) throw notFound('That person');
  if (status === 'active' && !user.passwordHash) {
    throw unprocessable('never-activated', 'This person has not accepted their invitation yet. Send a new invitation instead.');
  }
  if (user.status === status) return;
  const from = user.status;
  await user.update({ status }, { transaction });
  await recordAudit(transaction, {
    action: status === 'deactivated' ? 'user.deactivated' : 'user.reactivated',
    actorId: actor.id,
    subjectType: 'user',
    subjectId: userId,
    clientAddress: actor.address,
    details: { from, to: status },
  });
  if (status === 'deactivated') {
    await revokeAllApiTokens(transaction, userId, 'deactivated', { id: actor.id, clientAddress: actor.address });
    await endAllSessions(userId);
  }
}

interface InitiativeRow {
  id: string; name: string; slug: string; organisation: string; description: string;
  readers_see_rows: boolean; required_sign_offs: number; member_count: string; created_at: Date;
}

const toInitiative = (r: InitiativeRow): InitiativeItem => ({
  id: r.id,
  name: r.name,
  slug: r.slug,
  organisation: r.organisation,
  description: r.description,
  readersSeeRows: r.readers_see_rows,
  requiredSignOffs: Number(r.required_sign_offs),
  memberCount: Number(r.member_count),
  createdAt: iso(r.created_at) ?? '',
});

/** Every initiative the caller may see (administrators: all). */
export async function listInitiatives(transaction: Transaction): Promise<InitiativeItem[]> {
  // A count per initiative beside its columns: a reporting query, raw SQL.
  const rows = await sequelize.query<InitiativeRow>(
    `SELECT i.*, (SELECT count(*) FROM memberships m WHERE m.initiative_id = i.id) AS member_count
       FROM initiatives i WHERE i.archived_at IS NULL ORDER BY i.name`,
    { type: QueryTypes.SELECT, transaction },
  );
  return rows.map(toInitiative);
}

export function slugify(name: string): string {
  const slug = name.toLowerCase().normalize('NFKD').replace(/[^a-z0-9]+/g, '-').replace(/^-+|-+$/g, '').slice(0, 60);
  return slug || 'initiative';
}

export async function createInitiative(transaction: Transaction, actor: Actor, body: CreateInitiativeBody): Promise<InitiativeItem> {
  const base = slugify(body.name);
  const taken = await Initiative.count({ where: { [Op.or]: [{ slug: base }, { slug: { [Op.like]: `${base}-%` } }] }, transaction });
  const slug = taken === 0 ? base : `${base}-${taken + 1}`;
  const created = await Initiative.create(
    { name: body.name, slug, organisation: body.organisation, description: body.description, readersSeeRows: body.readersSeeRows },
    { transaction },
  );
  const row: InitiativeRow = {
    id: created.id, name: created.name, slug: created.slug, organisation: created.organisation, description: created.description,
    readers_see_rows: created.readersSeeRows, required_sign_offs: created.requiredSignOffs ?? 1, member_count: '0', created_at: created.createdAt,
  };
  await recordAudit(transaction, {
    action: 'initiative.created', actorId: actor.id, subjectType: 'initiative', subjectId: row.id,
    initiativeId: row.id, clientAddress: actor.address, details: { name: body.name },
  });
  return toInitiative(row);
}

export async function updateInitiative(transaction: Transaction, actor: Actor, initiativeId: string, body: UpdateInitiativeBody): Promise<void> {
  const initiative = await Initiative.findByPk(initiativeId, { attributes: ['id', 'readersSeeRows', 'description', 'requiredSignOffs'], lock: transaction.LOCK.UPDATE, transaction });
  if (!initiative) throw notFound('That initiative');
  const previousReadersSeeRows = initiative.readersSeeRows;
  const previousRequiredSignOffs = initiative.requiredSignOffs;
  initiative.readersSeeRows = body.readersSeeRows ?? initiative.readersSeeRows;
  initiative.description = body.description ?? initiative.description;
  initiative.requiredSignOffs = body.requiredSignOffs ?? initiative.requiredSignOffs;
  // updated_at changes on every update, as before, even when nothing else did.
  initiative.changed('updatedAt', true);
  await initiative.save({ transaction });
  await recordAudit(transaction, {
    action: 'initiative.updated', actorId: actor.id, subjectType: 'initiative', subjectId: initiativeId,
    initiativeId, clientAddress: actor.address, details: { ...body, previousReadersSeeRows, previousRequiredSignOffs },
  });
}

export interface MemberItem {
  membershipId: string;
  userId: string;
  email: string;
  displayName: string;
  status: string;
  role: 'analyst' | 'clinician' | 'auditor';
}

export async function listMembers(transaction: Transaction, initiativeId: string): Promise<MemberItem[]> {
  const memberships = await Membership.findAll({
    attributes: ['id', 'role'],
    where: { initiativeId },
    include: [{ model: User, as: 'user', attributes: ['id', 'email', 'displayName', 'status'], required: true }],
    order: [[{ model: User, as: 'user' }, 'displayName', 'ASC']],
    transaction,
  });
  return memberships.flatMap((m) => (m.user
    ? [{ membershipId: m.id, userId: m.user.id, email: m.user.email, displayName: m.user.displayName, status: m.user.status, role: m.role }]
    : []));
}

/** Adds a person to an initiative with one role, or changes their role there. */
export async function setMembership(
  transaction: Transaction,
  actor: Actor,
  initiativeId: string,
  userId: string,
  role: 'analyst' | 'clinician' | 'auditor',
): Promise<void> {
  const initiative = await Initiative.findByPk(initiativeId, { attributes: ['id'], transaction });
  if (!initiative) throw notFound('That initiative');
  const user = await User.findByPk(userId, { attributes: ['id'], transaction });
  if (!user) throw notFound('That person');
  const current = await Membership.findOne({
    attributes: ['id', 'role'], where: { initiativeId, userId }, lock: transaction.LOCK.UPDATE, transaction,
  });
  const previousRole = current?.role ?? null;
  if (previousRole === role) return;
  if (current) await current.update({ role }, { transaction });
  else await Membership.create({ initiativeId, userId, role }, { transaction });
  await recordAudit(transaction, {
    action: current ? 'membership.role-changed' : 'membership.added',
    actorId: actor.id,
    subjectType: 'user',
    subjectId: userId,
    initiativeId,
    clientAddress: actor.address,
    details: { from: previousRole, to: role },
  });
}

export async function removeMembership(transaction: Transaction, actor: Actor, initiativeId: string, userId: string): Promise<void> {
  const current = await Membership.findOne({
    attributes: ['id', 'role'], where: { initiativeId, userId }, lock: transaction.LOCK.UPDATE, transaction,
  });
  if (!current) throw notFound('That membership');
  await Membership.destroy({ where: { id: current.id }, transaction });
  await recordAudit(transaction, {
    action: 'membership.removed', actorId: actor.id, subjectType: 'user', subjectId: userId,
    initiativeId, clientAddress: actor.address, details: { from: current.role, to: null },
  });
}
