/**
 * The outbox: the local-only pages where administrators read the messages that the fake
 * mail server kept (the store's format is in src/lib/server/mailStore.ts).
 */
import { readdir, readFile } from 'node:fs/promises';
import { simpleParser } from 'mailparser';
import { z } from 'zod';
import { env } from '@/lib/server/env';
import { badRequest, notFound } from '@/lib/server/errors';
import { logger } from '@/lib/server/logger';
import { addressText, isMessageId, mailStoreDir, MessageSummary, messagePaths, SUMMARY_FILE } from '@/lib/server/mailStore';

export { isMessageId, mailStoreDir, MessageSummary, messagePaths, newMessageId } from '@/lib/server/mailStore';

/** One message as the recipient would see it. */
export interface OutboxMessage {
  id: string;
  receivedAt: string;
  from: string;
  to: string;
  subject: string;
  /** The message's own Date header, ISO 8601, or null when it has none. */
  date: string | null;
  text: string;
  /** The HTML body, or null for a plain-text message. */
  html: string | null;
  /** The http(s) links the message carries, in order of first appearance, without repeats. */
  links: string[];
  /** The files attached (a brief's PDF): name, type and size, never the content. */
  attachments: { filename: string; contentType: string; size: number }[];
}

export interface OutboxListing {
  messages: MessageSummary[];
  total: number;
  page: number;
  pageSize: number;
  pageCount: number;
}

export const OUTBOX_PAGE_SIZE = 25;
export const OUTBOX_MAX_PAGE_SIZE = 100;

/** The query string of the outbox list (page and endpoint). */
export const OutboxQuery = z.object({
  page: z.coerce.number().int().min(1, 'The page must be 1 or more.').default(1),
  pageSize: z.coerce
    .number()
    .int()
    .min(1, 'The page size must be 1 or more.')
    .max(OUTBOX_MAX_PAGE_SIZE, `The page size must be at most ${OUTBOX_MAX_PAGE_SIZE}.`)
    .default(OUTBOX_PAGE_SIZE),
});
export type OutboxQuery = z.infer<typeof OutboxQuery>;

/**
 * Who may see the outbox: administrators, and only while mail goes to the local fake
 * server. In `smtp` mode the outbox does not exist (404), since real mail is not kept.
 * `signed-out` means: send them to sign in (pages) or answer 401 (endpoints).
 */
export function outboxAccess(
  user: { isAdmin: boolean } | null,
  mode: 'local' | 'smtp' = env.CROSSGRAIN_MAIL_MODE,
): 'allowed' | 'signed-out' | 'hidden' {
  if (!user) return 'signed-out';
  if (mode !== 'local' || !user.isAdmin) return 'hidden';
  return 'allowed';
}

interface StoreOptions {
  /** The store folder; defaults to `mailStoreDir()`. */
  dir?: string;
}

async function storedIds(dir: string): Promise<string[]> {
  let names: string[];
  try {
    names = await readdir(dir);
  } catch (error) {
    if ((error as NodeJS.ErrnoException).code === 'ENOENT') return [];
    throw error;
  }
  const ids: string[] = [];
  for (const name of names) {
    const match = SUMMARY_FILE.exec(name);
    if (match) ids.push(match[1]);
  }
  return ids.sort().reverse();
}

async function readSummary(id: string, dir: string): Promise<MessageSummary | null> {
  const { summary } = messagePaths(id, dir);
  try {
    const parsed = MessageSummary.safeParse(JSON.parse(await readFile(summary, 'utf8')));
    if (parsed.success && parsed.data.id === id) return parsed.data;
  } catch (error) {
    if ((error as NodeJS.ErrnoException).code === 'ENOENT') return null;
  }
  logger.warn({ messageId: id }, 'outbox: unreadable message summary skipped');
  return null;
}

/**
 * The stored messages, newest first, one page at a time. A missing store folder is an
 * empty outbox. `page` counts from 1; a page past the end is empty.
 */
export async function listMessages(
  options: StoreOptions & { page?: number; pageSize?: number } = {},
): Promise<OutboxListing> {
  const dir = options.dir ?? mailStoreDir();
  const page = options.page ?? 1;
  const pageSize = options.pageSize ?? OUTBOX_PAGE_SIZE;
  if (!Number.isInteger(page) || page < 1) throw badRequest('The page must be a whole number from 1.');
  if (!Number.isInteger(pageSize) || pageSize < 1 || pageSize > OUTBOX_MAX_PAGE_SIZE) {
    throw badRequest(`The page size must be a whole number from 1 to ${OUTBOX_MAX_PAGE_SIZE}.`);
  }
  const ids = await storedIds(dir);
  const slice = ids.slice((page - 1) * pageSize, page * pageSize);
  const summaries = await Promise.all(slice.map((id) => readSummary(id, dir)));
  return {
    messages: summaries.filter((s): s is MessageSummary => s !== null),
    total: ids.length,
    page,
    pageSize,
    pageCount: Math.max(1, Math.ceil(ids.length / pageSize)),
  };
}

/** Every http(s) link in the message, HTML hrefs first, then bare URLs in the text. */
export function linksIn(html: string | null, text: string): string[] {
  const found: string[] = [];
  const add = (candidate: string) => {
    const decoded = candidate.replace(/&amp;/g, '&');
    if (!/^https?:\/\//i.test(decoded)) return;
    // Serialising through URL percent-encodes quotes and angle brackets, so a link is
    // safe in an attribute.
    let href: string;
    try {
      href = new URL(decoded).href;
    } catch {
      return;
    }
    if (!found.includes(href)) found.push(href);
  };
  if (html) for (const match of html.matchAll(/\bhref\s*=\s*["']([^"']+)["']/gi)) add(match[1].trim());
  for (const match of text.matchAll(/\bhttps?:\/\/[^\s<>"')\]]+/gi)) add(match[0]);
  return found;
}

/**
 * One stored message, parsed. 400 when the id is malformed, 404 when no such message
 * is stored.
 */
export async function readMessage(id: string, options: StoreOptions = {}): Promise<OutboxMessage> {
  const dir = options.dir ?? mailStoreDir();
  const { eml } = messagePaths(id, dir);
  const summary = await readSummary(id, dir);
  if (!summary) throw notFound('That message');
  let raw: Buffer;
  try {
    raw = await readFile(eml);
  } catch (error) {
    if ((error as NodeJS.ErrnoException).code === 'ENOENT') throw notFound('That message');
    throw error;
  }
  const parsed = await simpleParser(raw, { skipImageLinks: true, skipTextToHtml: true });
  const html = typeof parsed.html === 'string' ? parsed.html : null;
  const text = parsed.text ?? '';
  return {
    id,
    receivedAt: summary.receivedAt,
    from: addressText(parsed.from) || summary.from,
    to: addressText(parsed.to) || summary.to.join(', '),
    subject: parsed.subject ?? summary.subject,
    date: parsed.date ? parsed.date.toISOString() : null,
    text,
    html,
    links: linksIn(html, text),
    attachments: parsed.attachments.map((file) => ({ filename: file.filename ?? 'unnamed', contentType: file.contentType, size: file.size })),
  };
}

/** Escapes a value for a double-quoted HTML attribute, angle brackets included. */
function escapeAttribute(value: string): string {
  return value.replace(/&/g, '&amp;').replace(/"/g, '&quot;').replace(/</g, '&lt;').replace(/>/g, '&gt;');
}

/**
 * The iframe that previews a message's HTML body: `sandbox=""` (no scripts, no forms,
 * no same-origin access) and the body in `srcdoc`, where the embedding page's
 * Content-Security-Policy also applies (no remote images, no scripts).
 *
 * Built here rather than with an Astro attribute because Astro leaves `<` unescaped in
 * attribute values, and the response middleware adds a nonce to every `<script` it finds
 * in the page's HTML: a `<script` inside srcdoc would gain quotes that end the attribute.
 * Escaping every angle bracket keeps the srcdoc text free of tags on the wire.
 */
export function previewFrame(html: string, attributes: { title: string; className: string; testId: string }): string {
  return (
    `<iframe sandbox="" referrerpolicy="no-referrer" srcdoc="${escapeAttribute(html)}"` +
    ` title="${escapeAttribute(attributes.title)}" class="${escapeAttribute(attributes.className)}"` +
    ` data-testid="${escapeAttribute(attributes.testId)}"></iframe>`
  );
}
