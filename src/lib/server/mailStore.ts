/**
 * The local mail store: the folder where the fake mail server (`mailServer.ts`) keeps
 * every message it receives. The outbox pages read it (src/features/admin/outbox.ts).
 *
 * Each message is two files named by a server-chosen id:
 * - `<id>.eml`  the raw message as it arrived over SMTP;
 * - `<id>.json` a small summary (id, receivedAt, from, to, subject, size).
 * The server writes the .eml first and the .json last, each under a temporary name that
 * is then renamed, so a summary only ever points at a complete message.
 *
 * Ids start with the UTC arrival time, so sorting names sorts messages by arrival. They
 * are the only part of a path that comes from a request, so they are checked against a
 * strict pattern before any file is touched.
 */
import { randomBytes } from 'node:crypto';
import path from 'node:path';
import type { AddressObject, EmailAddress } from 'mailparser';
import { z } from 'zod';
import { env } from './env';
import { badRequest } from './errors';

/** `20260305T101112345Z-0f3a9c2b71de`: arrival time to the millisecond, then 48 random bits. */
const MESSAGE_ID = /^\d{8}T\d{9}Z-[0-9a-f]{12}$/;
export const SUMMARY_FILE = /^(\d{8}T\d{9}Z-[0-9a-f]{12})\.json$/;

/** The folder the fake mail server stores messages in: `${CROSSGRAIN_DATA_DIR}/mail`. */
export function mailStoreDir(): string {
  return path.resolve(env.CROSSGRAIN_DATA_DIR, 'mail');
}

/** True when `value` has the exact shape of an id the mail server hands out. */
export function isMessageId(value: unknown): value is string {
  return typeof value === 'string' && MESSAGE_ID.test(value);
}

/** A new message id for a message arriving at `now`. */
export function newMessageId(now: Date = new Date()): string {
  const stamp = now.toISOString().replace(/[-:.]/g, '');
  return `${stamp}-${randomBytes(6).toString('hex')}`;
}

/** What the store keeps beside each raw message. */
export const MessageSummary = z.object({
  id: z.string().regex(MESSAGE_ID),
  receivedAt: z.iso.datetime(),
  from: z.string(),
  to: z.array(z.string()),
  subject: z.string(),
  size: z.number().int().nonnegative(),
});
export type MessageSummary = z.infer<typeof MessageSummary>;

/** The paths of one message's files, after checking the id (400 when it is malformed). */
export function messagePaths(id: string, dir: string = mailStoreDir()): { eml: string; summary: string } {
  if (!isMessageId(id)) throw badRequest('That is not a valid message id.');
  const root = path.resolve(dir);
  const eml = path.resolve(root, `${id}.eml`);
  const summary = path.resolve(root, `${id}.json`);
  // The pattern already rules out separators and dots; this keeps it true if the pattern changes.
  if (path.dirname(eml) !== root || path.dirname(summary) !== root) throw badRequest('That is not a valid message id.');
  return { eml, summary };
}

function addressEntry(entry: EmailAddress): string {
  if (entry.group) return `${entry.name}: ${entry.group.map(addressEntry).join(', ')};`;
  if (!entry.address) return entry.name;
  return entry.name ? `${entry.name} <${entry.address}>` : entry.address;
}

/** A parsed address header as people write it: `Name <address>, other@address`. */
export function addressText(value: AddressObject | AddressObject[] | undefined): string {
  if (!value) return '';
  return (Array.isArray(value) ? value : [value]).flatMap((header) => header.value.map(addressEntry)).join(', ');
}
