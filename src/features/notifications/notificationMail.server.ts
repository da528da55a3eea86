/**
 * Notification e-mail. Each person chooses immediate mail, a daily digest, or none
 * (notification_settings; 'immediate' until they choose). Immediate mail is marked pending
 * in the event's transaction and goes after the commit; it never fails the request that
 * caused it. A mail not sent then (the process stopped, the mail server refused) is sent by
 * the worker's sweep a minute later; a failure is logged and the notification stays in
 * the bell. The digest (`sendDigests`, run by the
 * worker's timer and callable in tests) sends each digest person one message listing
 * their unread notifications since their last digest.
 */
import { Op, QueryTypes, type Transaction } from 'sequelize';
import { Notification, NotificationSetting, User, type NotificationKind } from '../../../db/models';
import { sequelize, withIdentity } from '@/lib/server/db';
import { publicUrl } from '@/lib/server/env';
import { logger } from '@/lib/server/logger';
import { recipientDomain, renderEmail, sendMail, type MailTransport } from '@/lib/server/mail';
import { notificationLink, notificationText } from './notifications';
import type { MailChoice } from './notifications.schema';

interface Written {
  id: string;
  recipientId: string;
  actorId: string;
  kind: NotificationKind;
  runId: string | null;
  briefId: string | null;
  title: string;
  excerpt: string;
}

interface Message { id: string; to: string; subject: string; text: string; html: string }

const SETTINGS_NOTE = 'You can choose how Crossgrain e-mails you (right away, a daily digest, or not at all) on your profile page.';
const absolute = (path: string) => `${publicUrl().replace(/\/$/, '')}${path}`;
const lineOf = (row: Omit<Written, 'id'>, actorName: string) => notificationText(row.kind, actorName, row.title, row.runId);
const linkOf = notificationLink;
/** How long one sending attempt holds a mail before another sender may try it. */
const LEASE_SECONDS = 300;
/** How old a pending mail must be before the sweep sends it (the sender after the commit goes first). */
export const OVERDUE_SECONDS = 60;

const uuidArray = (ids: readonly string[]) => `{${ids.join(',')}}`;

function messageOf(row: Written, to: string, actorName: string): Message {
  const line = lineOf(row, actorName);
  const body = renderEmail({
    heading: line,
    paragraphs: [...(row.excerpt ? [`“${row.excerpt}”`] : []), SETTINGS_NOTE],
    action: { label: row.briefId ? 'Read the brief' : 'Open the run', url: absolute(linkOf(row)) },
  });
  return { id: row.id, to, subject: line.slice(0, 200), text: body.text, html: body.html };
}

/**
 * Sends mails one by one, each claimed first (so two senders never send the same one) and
 * marked sent after; a failure leaves it pending for the sweep. Answers how many were sent.
 */
async function sendClaimed(messages: readonly Message[], transport?: MailTransport): Promise<number> {
  let sent = 0;
  for (const message of messages) {
    const claimed = await sequelize.query<{ id: string }>(
      'SELECT app_notification_mail_claim AS id FROM app_notification_mail_claim(:ids::uuid[], make_interval(secs => :lease))',
      { replacements: { ids: uuidArray([message.id]), lease: LEASE_SECONDS }, type: QueryTypes.SELECT },
    );
    if (claimed.length === 0) continue;
    try {
      await sendMail({ to: message.to, subject: message.subject, text: message.text, html: message.html }, { transport });
    } catch (error) {
      logger.warn({ recipientDomain: recipientDomain(message.to), error: error instanceof Error ? error.message : String(error) }, 'notification e-mail not sent; it stays pending');
      continue;
    }
    await sequelize.query('SELECT app_notification_mail_sent(:ids::uuid[])', { replacements: { ids: uuidArray([message.id]) } });
    sent += 1;
  }
  return sent;
}

/** Mails being sent after a commit in this process. */
const mailsInFlight = new Set<Promise<unknown>>();

/**
 * Marks pending, in the event's transaction, each written notification whose recipient
 * chose immediate mail, and sends those mails after the commit. The mark is what makes the
 * mail durable: if this process stops before sending, the worker's sweep
 * (`sendOverdueNotificationMail`) sends it.
 */
export async function mailAfterCommit(transaction: Transaction, written: readonly Written[], transport?: MailTransport): Promise<void> {
  if (written.length === 0) return;
  const pending = await sequelize.query<{ id: string; recipient_id: string }>(
    'SELECT id, recipient_id FROM app_notification_mail_pending(:ids::uuid[])',
    { replacements: { ids: uuidArray(written.map((w) => w.id)) }, type: QueryTypes.SELECT, transaction },
  );
  if (pending.length === 0) return;
  const marked = new Set(pending.map((row) => row.id));
  const immediate = written.filter((w) => marked.has(w.id));
  const people = await User.findAll({ attributes: ['id', 'email', 'displayName'], where: { id: [...new Set([...immediate.map((w) => w.recipientId), immediate[0].actorId])] }, transaction });
  const byId = new Map(people.map((p) => [p.id, p]));
  const actorName = byId.get(immediate[0].actorId)?.displayName ?? 'Someone';
  const messages = immediate.flatMap((row) => {
    const to = byId.get(row.recipientId)?.email;
    return to ? [messageOf(row, to, actorName)] : [];
  });
  transaction.afterCommit(() => {
    const sending: Promise<unknown> = sendClaimed(messages, transport)
      .catch((error: unknown) => logger.warn({ err: error }, 'notification e-mail not sent; it stays pending'))
      .finally(() => mailsInFlight.delete(sending));
    mailsInFlight.add(sending);
  });
}

/**
 * Settles once every mail this process began to send after a commit has been sent and
 * marked, or left pending: a script awaits it before it closes its database connections,
 * or a mail already sent would stay claimed but unmarked, and the sweep would send it again.
 */
export async function mailSettled(): Promise<void> {
  while (mailsInFlight.size > 0) await Promise.allSettled([...mailsInFlight]);
}

/**
 * The worker's sweep: sends immediate mails still pending `olderThanSeconds` after their
 * event (the process that should have sent them stopped, or the mail server refused).
 * Each recipient's notifications are read under that recipient's own identity. Answers
 * how many were sent.
 */
export async function sendOverdueNotificationMail(options: { olderThanSeconds?: number; transport?: MailTransport } = {}): Promise<number> {
  const overdue = await sequelize.query<{ id: string; recipient_id: string }>(
    'SELECT id, recipient_id FROM app_notification_mail_overdue(make_interval(secs => :age), make_interval(secs => :lease))',
    { replacements: { age: options.olderThanSeconds ?? OVERDUE_SECONDS, lease: LEASE_SECONDS }, type: QueryTypes.SELECT },
  );
  const byRecipient = new Map<string, string[]>();
  for (const row of overdue) byRecipient.set(row.recipient_id, [...(byRecipient.get(row.recipient_id) ?? []), row.id]);
  let sent = 0;
  for (const [recipientId, ids] of byRecipient) {
    const messages = await withIdentity(recipientId, async (transaction) => {
      const rows = await Notification.findAll({ where: { id: ids, recipientId }, order: [['createdAt', 'ASC']], transaction });
      const people = await User.findAll({ attributes: ['id', 'email', 'displayName'], where: { id: [...new Set([recipientId, ...rows.map((r) => r.actorId)])] }, transaction });
      const byId = new Map(people.map((p) => [p.id, p]));
      const to = byId.get(recipientId)?.email;
      return to ? rows.map((row) => messageOf(row, to, byId.get(row.actorId)?.displayName ?? 'Someone')) : [];
    });
    sent += await sendClaimed(messages, options.transport);
  }
  return sent;
}

/** The signed-in person's e-mail choice. */
export async function mailChoiceOf(transaction: Transaction, userId: string): Promise<MailChoice> {
  const row = await NotificationSetting.findOne({ attributes: ['mail'], where: { userId }, transaction });
  return row?.mail ?? 'immediate';
}

/** Sets the signed-in person's e-mail choice. */
export async function setMailChoice(transaction: Transaction, userId: string, mail: MailChoice): Promise<void> {
  const [row] = await NotificationSetting.findOrCreate({ where: { userId }, defaults: { userId, mail }, transaction });
  if (row.mail !== mail) await NotificationSetting.update({ mail, updatedAt: new Date() }, { where: { userId }, transaction });
}

/** The default gap between two digests of one person. */
export const DIGEST_EVERY_HOURS = 24;

/**
 * Sends each person who chose the daily digest, and whose last digest is at least
 * `everyHours` old, one e-mail listing their unread notifications since that digest
 * (all unread ones before their first). Each person is handled in their own transaction
 * under their own identity, holding their settings row so that two workers never send
 * the same digest; a failed send leaves the digest due. Answers how many were sent.
 */
export async function sendDigests(options: { everyHours?: number; transport?: MailTransport } = {}): Promise<number> {
  const everyHours = options.everyHours ?? DIGEST_EVERY_HOURS;
  // The people due, across identities: a SECURITY DEFINER function.
  const due = await sequelize.query<{ id: string }>(
    'SELECT app_notification_digest_due AS id FROM app_notification_digest_due(make_interval(secs => :seconds))',
    { replacements: { seconds: everyHours * 3600 }, type: QueryTypes.SELECT },
  );
  let sent = 0;
  for (const { id } of due) {
    try {
      if (await digestFor(id, everyHours, options.transport)) sent += 1;
    } catch (error) {
      logger.warn({ userId: id, error: error instanceof Error ? error.message : String(error) }, 'notification digest not sent');
    }
  }
  return sent;
}

async function digestFor(userId: string, everyHours: number, transport?: MailTransport): Promise<boolean> {
  return withIdentity(userId, async (transaction) => {
    const setting = await NotificationSetting.findOne({ where: { userId }, lock: transaction.LOCK.UPDATE, skipLocked: true, transaction });
    const now = new Date();
    if (!setting || setting.mail !== 'daily') return false;
    if (setting.lastDigestAt && now.getTime() - new Date(setting.lastDigestAt).getTime() < everyHours * 3600_000) return false;
    const since = setting.lastDigestAt ?? new Date(0);
    const rows = await Notification.findAll({
      where: { recipientId: userId, readAt: null, createdAt: { [Op.gt]: since, [Op.lte]: now } }, order: [['createdAt', 'ASC']], transaction,
    });
    if (rows.length === 0) return false;
    const people = await User.findAll({ attributes: ['id', 'email', 'displayName'], where: { id: [...new Set([userId, ...rows.map((r) => r.actorId)])] }, transaction });
    const byId = new Map(people.map((p) => [p.id, p]));
    const to = byId.get(userId)?.email;
    if (!to) return false;
    const lines = rows.map((row) => `${lineOf(row, byId.get(row.actorId)?.displayName ?? 'Someone')}: ${absolute(linkOf(row))}`);
    const heading = rows.length === 1 ? '1 unread notification' : `${rows.length} unread notifications`;
    const body = renderEmail({ heading, paragraphs: [...lines, SETTINGS_NOTE], action: { label: 'Open Crossgrain', url: absolute('/') } });
    await sendMail({ to, subject: `Crossgrain digest: ${heading}`, text: body.text, html: body.html }, { transport });
    await NotificationSetting.update({ lastDigestAt: now }, { where: { userId }, transaction });
    return true;
  });
}
