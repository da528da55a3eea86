/**
 * Distribution of published briefs: the initiative's distribution list (names and
 * addresses, kept by its analysts) and sends. A send e-mails the latest version to every
 * person on the list plus the addresses added for that send, each with the summary, the
 * link and the PDF attached; each recipient is one delivery row and one audit event, and
 * the send as a whole one more.
 */
import { randomUUID } from 'node:crypto';
import { QueryTypes, type Transaction } from 'sequelize';
import { sequelize } from '@/lib/server/db';
import { publicUrl } from '@/lib/server/env';
import { conflict, notFound } from '@/lib/server/errors';
import { logger } from '@/lib/server/logger';
import { recipientDomain, renderEmail, sendMail } from '@/lib/server/mail';
import { recordAudit } from '../audit/audit.server';
import { storedVersion, type Actor, type BriefRecord } from './briefs.server';

export interface Recipient { id: string; name: string; email: string }

/** The initiative's distribution list, by name. */
export async function listRecipients(transaction: Transaction, initiativeId: string): Promise<Recipient[]> {
  return sequelize.query<Recipient>(
    'SELECT id, name, email FROM brief_recipients WHERE initiative_id = :initiativeId ORDER BY lower(name), email',
    { replacements: { initiativeId }, type: QueryTypes.SELECT, transaction },
  );
}

/** Adds a person to the distribution list; 409 when the address is already on it. */
export async function addRecipient(transaction: Transaction, actor: Actor, initiativeId: string, person: { name: string; email: string }): Promise<string> {
  const email = person.email.trim().toLowerCase();
  const [existing] = await sequelize.query<{ id: string }>(
    'SELECT id FROM brief_recipients WHERE initiative_id = :initiativeId AND email = :email',
    { replacements: { initiativeId, email }, type: QueryTypes.SELECT, transaction },
  );
  if (existing) throw conflict('That address is already on the distribution list.');
  const [row] = await sequelize.query<{ id: string }>(
    'INSERT INTO brief_recipients (initiative_id, name, email, created_by) VALUES (:initiativeId, :name, :email, :actor) RETURNING id',
    { replacements: { initiativeId, name: person.name.trim(), email, actor: actor.id }, type: QueryTypes.SELECT, transaction },
  );
  await recordAudit(transaction, { action: 'brief.recipient-added', actorId: actor.id, subjectType: 'initiative', subjectId: initiativeId, initiativeId, clientAddress: actor.clientAddress, details: { recipientId: row.id, recipientDomain: recipientDomain(email) } });
  return row.id;
}

/** Removes a person from the distribution list. */
export async function removeRecipient(transaction: Transaction, actor: Actor, initiativeId: string, recipientId: string): Promise<void> {
  const [row] = await sequelize.query<{ id: string }>(
    'DELETE FROM brief_recipients WHERE id = :recipientId AND initiative_id = :initiativeId RETURNING id',
    { replacements: { recipientId, initiativeId }, type: QueryTypes.SELECT, transaction },
  );
  if (!row) throw notFound('That recipient');
  await recordAudit(transaction, { action: 'brief.recipient-removed', actorId: actor.id, subjectType: 'initiative', subjectId: initiativeId, initiativeId, clientAddress: actor.clientAddress, details: { recipientId } });
}

/** E-mails the latest published version to the list and the extra addresses; answers the send id and how many were sent. */
export async function distributeBrief(transaction: Transaction, actor: Actor, brief: BriefRecord, extra: readonly string[]): Promise<{ sendId: string; recipients: number }> {
  if (brief.state === 'draft') throw conflict('Publish the brief before sending it.');
  if (brief.state === 'retracted') throw conflict('A retracted brief is not sent.');
  const version = await storedVersion(transaction, brief.id);
  if (!version) throw conflict('Publish the brief before sending it.');
  const list = await listRecipients(transaction, brief.initiativeId);
  const people = new Map<string, string>();
  for (const person of list) people.set(person.email.toLowerCase(), person.name);
  for (const address of extra) if (!people.has(address.toLowerCase())) people.set(address.toLowerCase(), '');
  if (people.size === 0) throw conflict('Nobody to send to: add people to the distribution list or name recipients for this send.');

  const sendId = randomUUID();
  const url = `${publicUrl().replace(/\/$/, '')}/briefs/${brief.id}`;
  const content = version.content;
  const email = renderEmail({
    heading: content.title,
    paragraphs: [content.summary, content.interactionTest, `Version ${version.version}. The brief is attached as a PDF; the page below shows its version history.`, ...content.cautions],
    action: { label: 'Read the brief', url },
    footer: 'An internal brief from Crossgrain. Exploratory: not clinical guidance. Do not forward outside your organisation.',
  });
  const filename = `brief-${brief.id.slice(0, 8)}-v${version.version}.pdf`;
  let sent = 0;
  for (const [address, name] of people) {
    let messageId: string | null = null;
    let status: 'sent' | 'failed' = 'sent';
    try {
      messageId = (await sendMail({
        to: address, subject: `Brief: ${content.title}`.slice(0, 200), text: email.text, html: email.html,
        attachments: [{ filename, content: version.pdf, contentType: 'application/pdf' }],
      })).messageId;
      sent += 1;
    } catch (error) {
      status = 'failed';
      logger.warn({ briefId: brief.id, recipientDomain: recipientDomain(address), error: error instanceof Error ? error.message : String(error) }, 'brief e-mail not sent');
    }
    const [delivery] = await sequelize.query<{ id: string }>(
      `INSERT INTO brief_deliveries (send_id, brief_id, initiative_id, version, recipient_email, recipient_name, status, message_id, sent_by)
       VALUES (:sendId, :briefId, :initiativeId, :version, :address, :name, :status, :messageId, :actor) RETURNING id`,
      { replacements: { sendId, briefId: brief.id, initiativeId: brief.initiativeId, version: version.version, address, name, status, messageId, actor: actor.id }, type: QueryTypes.SELECT, transaction },
    );
    await recordAudit(transaction, {
      action: 'brief.distributed', actorId: actor.id, subjectType: 'brief', subjectId: brief.id, initiativeId: brief.initiativeId, clientAddress: actor.clientAddress,
      details: { sendId, deliveryId: delivery.id, version: version.version, recipientDomain: recipientDomain(address), status },
    });
  }
  await recordAudit(transaction, {
    action: 'brief.distributed', actorId: actor.id, subjectType: 'brief', subjectId: brief.id, initiativeId: brief.initiativeId, clientAddress: actor.clientAddress,
    details: { sendId, version: version.version, recipients: people.size, sent, fromList: list.length, added: people.size - list.length },
  });
  return { sendId, recipients: sent };
}

/** The sends of a brief: one line per recipient, newest first. */
export async function deliveriesOf(transaction: Transaction, briefId: string) {
  const rows = await sequelize.query<{ send_id: string; version: number; recipient_email: string; recipient_name: string; status: string; sent_at: Date; sender: string }>(
    `SELECT d.send_id, d.version, d.recipient_email, d.recipient_name, d.status, d.sent_at, u.display_name AS sender
       FROM brief_deliveries d JOIN users u ON u.id = d.sent_by WHERE d.brief_id = :briefId ORDER BY d.sent_at DESC`,
    { replacements: { briefId }, type: QueryTypes.SELECT, transaction },
  );
  return rows.map((row) => ({ sendId: row.send_id, version: row.version, email: row.recipient_email, name: row.recipient_name, status: row.status, at: new Date(row.sent_at).toISOString(), sender: row.sender }));
}
