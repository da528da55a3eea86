/**
 * Notifications (issue: "the analyst never hears that a run was sent back"). Each event of
 * review or publication writes one notification per person told, in the transaction of
 * the event, so a notification exists exactly when its event does: a submission tells the
 * initiative's clinicians; a send-back (with its note) or a sign-off tells the analyst who
 * started the run; a reply tells the author of the comment answered; "@Name" or "@email"
 * in a comment tells that member; a published brief tells every member. The writer is
 * never told of their own act. Those who chose immediate e-mail get it after the commit
 * (notificationMail.server.ts); row-level security (policies/rls/011_notifications.sql)
 * shows each person only their own.
 */
import { Op, type Transaction } from 'sequelize';
import { Analysis, Membership, Notification, Run, RunComment, User, type NotificationKind } from '../../../db/models';
import { mailAfterCommit } from './notificationMail.server';
import { mentions, notificationLink, notificationText, shortId } from './notifications';
import type { MarkReadBody, NotificationItem, NotificationsView } from './notifications.schema';

interface Event {
  kind: NotificationKind;
  actorId: string;
  initiativeId: string;
  runId: string | null;
  briefId: string | null;
  title: string;
  excerpt: string;
}

const EXCERPT = 280;
const excerptOf = (text: string) => {
  const flat = text.trim().replace(/\s+/g, ' ');
  return flat.length > EXCERPT ? `${flat.slice(0, EXCERPT - 1)}…` : flat;
};

/** Writes the event's notification for each person named (the actor and repeats left out), and queues the immediate e-mails. */
async function record(transaction: Transaction, event: Event, recipients: readonly string[]): Promise<number> {
  const people = [...new Set(recipients)].filter((id) => id !== event.actorId);
  if (people.length === 0) return 0;
  const rows = people.map((recipientId) => ({ ...event, recipientId, excerpt: excerptOf(event.excerpt) }));
  // No RETURNING: the writer may not read a notification meant for someone else.
  const created = await Notification.bulkCreate(rows, { transaction, returning: false });
  await mailAfterCommit(transaction, created.map((row) => row.get({ plain: true })));
  return people.length;
}

async function runTitle(transaction: Transaction, runId: string): Promise<string> {
  const run = await Run.findOne({
    attributes: ['id'], where: { id: runId }, include: [{ model: Analysis, as: 'analysis', attributes: ['title'], required: true }], transaction,
  });
  return run?.analysis?.title ?? 'A run';
}

/** The active members of an initiative, optionally of one role. */
async function membersOf(transaction: Transaction, initiativeId: string, role?: 'clinician') {
  const memberships = await Membership.findAll({
    attributes: ['userId'], where: { initiativeId, ...(role ? { role } : {}) },
    include: [{ model: User, as: 'user', attributes: ['id', 'displayName', 'email'], where: { status: 'active' }, required: true }],
    transaction,
  });
  return memberships.map((m) => ({ id: m.userId, name: m.user?.displayName ?? '', email: m.user?.email ?? '' }));
}

/** After a review step is recorded: tells the clinicians of a submission, the analyst of a decision. */
export async function notifyReviewStep(
  transaction: Transaction, actorId: string, run: { id: string; initiativeId: string; startedBy: string },
  kind: 'submitted' | 'signed-off' | 'sent-back', note: string,
): Promise<number> {
  const event: Event = { kind, actorId, initiativeId: run.initiativeId, runId: run.id, briefId: null, title: await runTitle(transaction, run.id), excerpt: note };
  const recipients = kind === 'submitted' ? (await membersOf(transaction, run.initiativeId, 'clinician')).map((m) => m.id) : [run.startedBy];
  return record(transaction, event, recipients);
}

/** After a comment is recorded: a reply tells the author of the comment answered; a mention tells the member named. */
export async function notifyComment(
  transaction: Transaction, actorId: string, run: { id: string; initiativeId: string }, body: string, parentId?: string | null,
): Promise<number> {
  const base = { actorId, initiativeId: run.initiativeId, runId: run.id, briefId: null, title: await runTitle(transaction, run.id), excerpt: body };
  let told = 0;
  const replied: string[] = [];
  if (parentId) {
    const parent = await RunComment.findOne({ attributes: ['authorId'], where: { id: parentId }, transaction });
    if (parent) replied.push(parent.authorId);
    told += await record(transaction, { ...base, kind: 'reply' }, replied);
  }
  if (body.includes('@')) {
    const named = (await membersOf(transaction, run.initiativeId)).filter((m) => mentions(body, m) && !replied.includes(m.id));
    told += await record(transaction, { ...base, kind: 'mention' }, named.map((m) => m.id));
  }
  return told;
}

/** After a brief is published: tells every member of the initiative. */
export async function notifyBriefPublished(
  transaction: Transaction, actorId: string, brief: { id: string; initiativeId: string; runId: string; title: string },
): Promise<number> {
  const event: Event = { kind: 'brief-published', actorId, initiativeId: brief.initiativeId, runId: brief.runId, briefId: brief.id, title: brief.title, excerpt: '' };
  return record(transaction, event, (await membersOf(transaction, brief.initiativeId)).map((m) => m.id));
}

/** The signed-in person's unread count and latest notifications (row-level security shows only theirs). */
export async function listNotifications(transaction: Transaction, userId: string, limit = 20): Promise<NotificationsView> {
  const unread = await Notification.count({ where: { recipientId: userId, readAt: null }, transaction });
  const rows = await Notification.findAll({ where: { recipientId: userId }, order: [['createdAt', 'DESC'], ['id', 'DESC']], limit, transaction });
  const actors = await User.findAll({ attributes: ['id', 'displayName'], where: { id: [...new Set(rows.map((r) => r.actorId))] }, transaction });
  const names = new Map(actors.map((a) => [a.id, a.displayName]));
  const items: NotificationItem[] = rows.map((row) => ({
    id: row.id, kind: row.kind, text: notificationText(row.kind, names.get(row.actorId) ?? 'Someone', row.title, row.runId),
    excerpt: row.excerpt, runId: row.runId, shortRunId: row.runId ? shortId(row.runId) : null, briefId: row.briefId,
    link: notificationLink(row), actor: { id: row.actorId, name: names.get(row.actorId) ?? '' }, at: new Date(row.createdAt).toISOString(), read: row.readAt !== null,
  }));
  return { unread, items };
}

/** Marks the named notifications (or all) read; answers how many changed and how many stay unread. */
export async function markRead(transaction: Transaction, userId: string, body: MarkReadBody): Promise<{ marked: number; unread: number }> {
  const where = { recipientId: userId, readAt: null, ...('ids' in body ? { id: { [Op.in]: body.ids } } : {}) };
  const [marked] = await Notification.update({ readAt: new Date() }, { where, transaction });
  const unread = await Notification.count({ where: { recipientId: userId, readAt: null }, transaction });
  return { marked, unread };
}
