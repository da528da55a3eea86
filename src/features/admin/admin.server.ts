/**
 * Administration: people, initiatives and memberships. Every function runs in the
 * administrator's request transaction (row-level security lets administrators manage
 * initiatives and memberships) and writes its audit event in the same transaction.
 */
import { QueryTypes, type Transaction } from 'sequelize';
import { sequelize } from '../../lib/server/db';
import { publicUrl } from '../../lib/server/env';
import { conflict, notFound, unprocessable } from '../../lib/server/errors';
import { renderEmail, sendMail } from '../../lib/server/mail';
import { endAllSessions } from '../../lib/server/session';
import { recordAudit } from '../audit/audit.server';
import { issueToken } from '../auth/auth.server';
import type { CreateInitiativeBody, InitiativeItem, InviteUserBody, UpdateInitiativeBody, UserListItem } from './admin.schema';

export interface Actor {
  id: string;
  address: string;
}

const iso = (value: Date | string | null) => (value === null ? null : new Date(value).toISOString());

/** Every account with its memberships, for the people list. */
export async function listUsers(transaction: Transaction): Promise<UserListItem[]> {
  const rows = await sequelize.query<{
    id: string; email: string; display_name: string; status: UserListItem['status']; is_admin: boolean;
    last_sign_in_at: Date | null; created_at: Date; memberships: UserListItem['memberships'] | null;
  }>(
    `SELECT u.id, u.email, u.display_name, u.status, u.is_admin, u.last_sign_in_at, u.created_at,
            (SELECT json_agg(json_build_object('initiativeId', i.id, 'initiativeName', i.name, 'role', m.role, 'membershipId', m.id) ORDER BY i.name)
               FROM memberships m JOIN initiatives i ON i.id = m.initiative_id WHERE m.user_id = u.id) AS memberships
       FROM users u ORDER BY u.display_name`,
    { type: QueryTypes.SELECT, transaction },
  );
  return rows.map((r) => ({
    id: r.id,
    email: r.email,
    displayName: r.display_name,
    status: r.status,
    isAdmin: r.is_admin,
    lastSignInAt: iso(r.last_sign_in_at),
    createdAt: iso(r.created_at) ?? '',
    memberships: r.memberships ?? [],
  }));
}

/**
 * Invites a person: creates the account (status `invited`) or, for an invited account
 * that never accepted, issues a fresh link; optionally adds a membership; e-mails a
 * single-use link valid for 7 days. The e-mail goes out after the transaction commits.
 */
export async function inviteUser(transaction: Transaction, actor: Actor, body: InviteUserBody): Promise<{ userId: string; send: () => Promise<unknown> }> {
  const [existing] = await sequelize.query<{ id: string; status: string }>(
    'SELECT id, status FROM users WHERE email = :email',
    { replacements: { email: body.email }, type: QueryTypes.SELECT, transaction },
  );
  if (existing && existing.status !== 'invited') {
    throw conflict('That person already has an account. Add them to an initiative from the initiative page instead.');
  }
  let userId = existing?.id;
  if (!userId) {
    const [created] = await sequelize.query<{ id: string }>(
      `INSERT INTO users (email, display_name, status, is_admin) VALUES (:email, :name, 'invited', :isAdmin) RETURNING id`,
      { replacements: { email: body.email, name: body.displayName, isAdmin: body.isAdmin }, type: QueryTypes.SELECT, transaction },
    );
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
  const link = `${publicUrl()}/invitation?token=${encodeURIComponent(token)}`;
  const email = renderEmail({
    heading: "You're invited to Crossgrain",
    paragraphs: [
      `Hello ${body.displayName},`,
      'You have been invited to Crossgrain, the effect-modification review board of your quality-improvement team.',
      'Set your password to finish. The link works once, for 7 days.',
    ],
    action: { label: 'Set your password', url: link },
  });
  const send = () => sendMail({ to: body.email, subject: "You're invited to Crossgrain", ...email });
  return { userId, send };
}

/** Deactivates (ending all sessions) or reactivates an account. */
export async function setUserStatus(transaction: Transaction, actor: Actor, userId: string, status: 'active' | 'deactivated'): Promise<void> {
  if (userId === actor.id && status === 'deactivated') {
    throw unprocessable('cannot-deactivate-self', 'You cannot deactivate your own account.');
  }
  const [user] = await sequelize.query<{ status: string; password_hash: string | null }>(
    'SELECT status, password_hash FROM users WHERE id = :id FOR UPDATE',
    { replacements: { id: userId }, type: QueryTypes.SELECT, transaction },
  );
  if (!user) throw notFound('That person');
  if (status === 'active' && !user.password_hash) {
    throw unprocessable('never-activated', 'This person has not accepted their invitation yet. Send a new invitation instead.');
  }
  if (user.status === status) return;
  await sequelize.query('UPDATE users SET status = :status, updated_at = now() WHERE id = :id', { replacements: { id: userId, status }, transaction });
  await recordAudit(transaction, {
    action: status === 'deactivated' ? 'user.deactivated' : 'user.reactivated',
    actorId: actor.id,
    subjectType: 'user',
    subjectId: userId,
    clientAddress: actor.address,
    details: { from: user.status, to: status },
  });
  if (status === 'deactivated') await endAllSessions(userId);
}

interface InitiativeRow {
  id: string; name: string; slug: string; organisation: string; description: string;
  readers_see_rows: boolean; member_count: string; created_at: Date;
}

const toInitiative = (r: InitiativeRow): InitiativeItem => ({
  id: r.id,
  name: r.name,
  slug: r.slug,
  organisation: r.organisation,
  description: r.description,
  readersSeeRows: r.readers_see_rows,
  memberCount: Number(r.member_count),
  createdAt: iso(r.created_at) ?? '',
});

/** Every initiative the caller may see (administrators: all). */
export async function listInitiatives(transaction: Transaction): Promise<InitiativeItem[]> {
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
  const [{ taken }] = await sequelize.query<{ taken: string }>(
    "SELECT count(*) AS taken FROM initiatives WHERE slug = :base OR slug LIKE :pattern",
    { replacements: { base, pattern: `${base}-%` }, type: QueryTypes.SELECT, transaction },
  );
  const slug = Number(taken) === 0 ? base : `${base}-${Number(taken) + 1}`;
  const [row] = await sequelize.query<InitiativeRow>(
    `INSERT INTO initiatives (name, slug, organisation, description, readers_see_rows)
     VALUES (:name, :slug, :organisation, :description, :readersSeeRows)
     RETURNING *, 0 AS member_count`,
    { replacements: { ...body, slug }, type: QueryTypes.SELECT, transaction },
  );
  await recordAudit(transaction, {
    action: 'initiative.created', actorId: actor.id, subjectType: 'initiative', subjectId: row.id,
    initiativeId: row.id, clientAddress: actor.address, details: { name: body.name },
  });
  return toInitiative(row);
}

export async function updateInitiative(transaction: Transaction, actor: Actor, initiativeId: string, body: UpdateInitiativeBody): Promise<void> {
  const [row] = await sequelize.query<{ readers_see_rows: boolean }>(
    'SELECT readers_see_rows FROM initiatives WHERE id = :id FOR UPDATE',
    { replacements: { id: initiativeId }, type: QueryTypes.SELECT, transaction },
  );
  if (!row) throw notFound('That initiative');
  await sequelize.query(
    `UPDATE initiatives SET readers_see_rows = coalesce(:readersSeeRows, readers_see_rows),
            description = coalesce(:description, description), updated_at = now() WHERE id = :id`,
    { replacements: { id: initiativeId, readersSeeRows: body.readersSeeRows ?? null, description: body.description ?? null }, transaction },
  );
  await recordAudit(transaction, {
    action: 'initiative.updated', actorId: actor.id, subjectType: 'initiative', subjectId: initiativeId,
    initiativeId, clientAddress: actor.address, details: { ...body, previousReadersSeeRows: row.readers_see_rows },
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
  return sequelize.query<MemberItem>(
    `SELECT m.id AS "membershipId", u.id AS "userId", u.email, u.display_name AS "displayName", u.status, m.role
       FROM memberships m JOIN users u ON u.id = m.user_id WHERE m.initiative_id = :initiativeId ORDER BY u.display_name`,
    { replacements: { initiativeId }, type: QueryTypes.SELECT, transaction },
  );
}

/** Adds a person to an initiative with one role, or changes their role there. */
export async function setMembership(
  transaction: Transaction,
  actor: Actor,
  initiativeId: string,
  userId: string,
  role: 'analyst' | 'clinician' | 'auditor',
): Promise<void> {
  const [initiative] = await sequelize.query<{ id: string }>('SELECT id FROM initiatives WHERE id = :id', {
    replacements: { id: initiativeId }, type: QueryTypes.SELECT, transaction,
  });
  if (!initiative) throw notFound('That initiative');
  const [user] = await sequelize.query<{ id: string }>('SELECT id FROM users WHERE id = :id', {
    replacements: { id: userId }, type: QueryTypes.SELECT, transaction,
  });
  if (!user) throw notFound('That person');
  const [current] = await sequelize.query<{ id: string; role: string }>(
    'SELECT id, role FROM memberships WHERE initiative_id = :initiativeId AND user_id = :userId FOR UPDATE',
    { replacements: { initiativeId, userId }, type: QueryTypes.SELECT, transaction },
  );
  if (current?.role === role) return;
  if (current) {
    await sequelize.query('UPDATE memberships SET role = :role, updated_at = now() WHERE id = :id', { replacements: { id: current.id, role }, transaction });
  } else {
    await sequelize.query('INSERT INTO memberships (initiative_id, user_id, role) VALUES (:initiativeId, :userId, :role)', {
      replacements: { initiativeId, userId, role }, transaction,
    });
  }
  await recordAudit(transaction, {
    action: current ? 'membership.role-changed' : 'membership.added',
    actorId: actor.id,
    subjectType: 'user',
    subjectId: userId,
    initiativeId,
    clientAddress: actor.address,
    details: { from: current?.role ?? null, to: role },
  });
}

export async function removeMembership(transaction: Transaction, actor: Actor, initiativeId: string, userId: string): Promise<void> {
  const [current] = await sequelize.query<{ id: string; role: string }>(
    'SELECT id, role FROM memberships WHERE initiative_id = :initiativeId AND user_id = :userId FOR UPDATE',
    { replacements: { initiativeId, userId }, type: QueryTypes.SELECT, transaction },
  );
  if (!current) throw notFound('That membership');
  await sequelize.query('DELETE FROM memberships WHERE id = :id', { replacements: { id: current.id }, transaction });
  await recordAudit(transaction, {
    action: 'membership.removed', actorId: actor.id, subjectType: 'user', subjectId: userId,
    initiativeId, clientAddress: actor.address, details: { from: current.role, to: null },
  });
}
