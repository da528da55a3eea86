/**
 * Notification e-mail. Each person chooses immediate mail, a daily digest, or none
 * (notification_settings; 'immediate' until they choose). Immediate mail goes after the
 * event's transaction commits and never fails the request that caused it: a failure is
 * logged and the notification stays in the bell. The digest (`sendDigests`, run by the
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
  recipientId: string;
  actorId: string;
  kind: NotificationKind;
  runId: string | null;
  briefId: string | null;
  title: string;
  excerpt: string;
}

const SETTINGS_NOTE = 'You can choose how Crossgrain e-mails you (right away, a daily digest, or not at all) on your profile page.';
const absolute = (path: string) => `${publicUrl().replace(/\/$/, '')}${path}`;
const lineOf = (row: Written, actorName: string) => notificationText(row.kind, actorName, row.title, row.runId);
const linkOf = notificationLink;

/** How each person wants mail (the sender may not read others' settings: a SECURITY DEFINER function). */
async function choicesOf(transaction: Transaction, people: readonly string[]): Promise<Map<string, MailChoice>> {
  const rows = await sequelize.query<{ user_id: string; mail: MailChoice }>(
    'SELECT user_id, mail FROM app_notification_mail_choices(:people::uuid[])',
    { replacements: { people: `{${people.join(',')}}` }, type: QueryTypes.SELECT, transaction },
  );
  return new Map(rows.map((row) => [row.user_id, row.mail]));
}

/** Queues, for after the commit, one e-mail per written notification whose recipient chose immediate mail. */
export async function mailAfterCommit(transaction: Transaction, written: readonly Written[], transport?: MailTransport): Promise<void> {
  if (written.length === 0) return;
  const choices = await choicesOf(transaction, written.map((w) => w.recipientId));
  const immediate = written.filter((w) => choices.get(w.recipientId) === 'immediate');
  if (immediate.length === 0) return;
  const people = await User.findAll({ attributes: ['id', 'email', 'displayName'], where: { id: [...new Set([...immediate.map((w) => w.recipientId), immediate[0].actorId])] }, transaction });
  const byId = new Map(people.map((p) => [p.id, p]));
  const actorName = byId.get(immediate[0].actorId)?.displayName ?? 'Someone';
  const messages = immediate.flatMap((row) => {
    const to = byId.get(row.recipientId)?.email;
    if (!to) return [];
    const line = lineOf(row, actorName);
    const body = renderEmail({
      heading: line,
      paragraphs: [...(row.excerpt ? [`“${row.excerpt}”`] : []), SETTINGS_NOTE],
      action: { label: row.briefId ? 'Read the brief' : 'Open the run', url: absolute(linkOf(row)) },
    });
    return [{ to, subject: line.slice(0, 200), text: body.text, html: body.html }];
  });
  transaction.afterCommit(() => {
    void (async () => {
      for (const message of messages) {
        try {
          await sendMail(message, { transport });
        } catch (error) {
          logger.warn({ recipientDomain: recipientDomain(message.to), error: error instanceof Error ? error.message : String(error) }, 'notification e-mail not sent');
        }
      }
    })();
  });
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
