/**
 * The local fake mail server. In `local` mail mode the app sends every message here
 * instead of to a real mail host; the server keeps each one in the mail store
 * (`${CROSSGRAIN_DATA_DIR}/mail`, see `outbox.ts`) for the outbox pages to show.
 *
 * It listens on loopback only, offers no authentication and no TLS (there is nothing to
 * protect on 127.0.0.1 and no certificate to manage), and refuses messages over the size
 * limit with 552. `npm start` runs it beside the app:
 *
 *   npx tsx src/lib/server/mailServer.ts
 *
 * which listens on CROSSGRAIN_SMTP_PORT (default 2525) and stops cleanly on SIGTERM or
 * SIGINT. Tests call `startMailServer({ port: 0, dir })` and `close()` the handle.
 */
import { mkdir, rename, rm, writeFile } from 'node:fs/promises';
import type { AddressInfo } from 'node:net';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { simpleParser } from 'mailparser';
import { SMTPServer, type SMTPServerDataStream, type SMTPServerError, type SMTPServerSession } from 'smtp-server';
import { env } from './env';
import { logger } from './logger';
import { addressText, mailStoreDir, messagePaths, newMessageId, type MessageSummary } from './mailStore';

/** The largest message the server accepts: invitations and resets are a few kilobytes. */
export const MAIL_SIZE_LIMIT_BYTES = 10 * 1024 * 1024;

export interface MailServerOptions {
  /** The TCP port; 0 picks a free one (see `handle.port`). */
  port: number;
  /** The store folder; created when missing. */
  dir: string;
  /** Refuse messages larger than this many bytes (default `MAIL_SIZE_LIMIT_BYTES`). */
  sizeLimitBytes?: number;
}

export interface MailServerHandle {
  /** The port the server actually listens on. */
  port: number;
  /** The absolute store folder. */
  dir: string;
  /** Stops accepting connections and waits (at most a few seconds) for open ones to end. */
  close: () => Promise<void>;
}

const HOST = '127.0.0.1';
/** How long `close()` lets an open SMTP session finish before it is cut. */
const CLOSE_GRACE_MS = 2_000;

function smtpError(message: string, responseCode: number): SMTPServerError {
  return Object.assign(new Error(message), { responseCode });
}

/** Writes a file under a temporary name in the same folder, then renames it into place. */
async function writeAtomically(file: string, data: string | Buffer): Promise<void> {
  const temporary = path.join(path.dirname(file), `.${path.basename(file)}.${process.pid}.tmp`);
  try {
    await writeFile(temporary, data, { mode: 0o600, flag: 'wx' });
    await rename(temporary, file);
  } catch (error) {
    await rm(temporary, { force: true });
    throw error;
  }
}

/** Reads the whole DATA stream, keeping at most `limit` bytes (the rest is drained). */
function collect(stream: SMTPServerDataStream, limit: number): Promise<Buffer | null> {
  return new Promise((resolve, reject) => {
    const chunks: Buffer[] = [];
    let length = 0;
    let over = false;
    stream.on('data', (chunk: Buffer) => {
      if (over) return;
      length += chunk.length;
      if (length > limit) {
        over = true;
        chunks.length = 0;
        return;
      }
      chunks.push(chunk);
    });
    stream.once('error', reject);
    stream.once('end', () => resolve(over || stream.sizeExceeded ? null : Buffer.concat(chunks, length)));
  });
}

/** Stores one received message: the raw .eml, then its summary. */
async function store(dir: string, raw: Buffer, session: SMTPServerSession): Promise<MessageSummary> {
  const receivedAt = new Date();
  const id = newMessageId(receivedAt);
  const headers = await simpleParser(raw, { skipHtmlToText: true, skipTextToHtml: true, skipImageLinks: true });
  const envelopeFrom = session.envelope.mailFrom ? session.envelope.mailFrom.address : '';
  const summary: MessageSummary = {
    id,
    receivedAt: receivedAt.toISOString(),
    from: addressText(headers.from) || envelopeFrom,
    // The envelope is who the message was actually delivered to (Bcc included).
    to: session.envelope.rcptTo.map((r) => r.address),
    subject: headers.subject ?? '',
    size: raw.length,
  };
  const paths = messagePaths(id, dir);
  await writeAtomically(paths.eml, raw);
  await writeAtomically(paths.summary, `${JSON.stringify(summary, null, 2)}\n`);
  return summary;
}

const domainOf = (address: string) => address.slice(address.lastIndexOf('@') + 1).toLowerCase();

/**
 * Starts the fake mail server on 127.0.0.1. Resolves once it listens; rejects when the
 * port is taken.
 */
export async function startMailServer(options: MailServerOptions): Promise<MailServerHandle> {
  const dir = path.resolve(options.dir);
  const sizeLimit = options.sizeLimitBytes ?? MAIL_SIZE_LIMIT_BYTES;
  await mkdir(dir, { recursive: true, mode: 0o700 });

  const server = new SMTPServer({
    name: 'crossgrain-local-mail',
    banner: 'Crossgrain local mail (messages are kept, never delivered)',
    logger: false,
    secure: false,
    authOptional: true,
    disabledCommands: ['STARTTLS', 'AUTH'],
    size: sizeLimit,
    rejectOversized: true,
    closeTimeout: CLOSE_GRACE_MS,
    onData(stream, session, callback) {
      collect(stream, sizeLimit)
        .then(async (raw) => {
          if (!raw) {
            logger.warn({ limitBytes: sizeLimit }, 'local mail: oversized message refused');
            return callback(smtpError('Message exceeds the size limit of the local mail server', 552));
          }
          const summary = await store(dir, raw, session);
          logger.info(
            { messageId: summary.id, recipientDomains: [...new Set(summary.to.map(domainOf))], bytes: summary.size },
            'local mail: message stored',
          );
          callback(null, `Stored as ${summary.id}`);
        })
        .catch((error: unknown) => {
          logger.error({ err: error }, 'local mail: storing a message failed');
          callback(smtpError('The local mail server could not store the message', 451));
        });
    },
  });

  await new Promise<void>((resolve, reject) => {
    const onError = (error: Error) => reject(error);
    server.server.once('error', onError);
    server.listen(options.port, HOST, () => {
      server.server.off('error', onError);
      resolve();
    });
  });
  // After start-up, a broken connection must not bring the process down.
  server.on('error', (error) => logger.warn({ err: error }, 'local mail: connection error'));

  const port = (server.server.address() as AddressInfo).port;
  let closing: Promise<void> | null = null;
  return {
    port,
    dir,
    close: () => {
      closing ??= new Promise<void>((resolve) => server.close(() => resolve()));
      return closing;
    },
  };
}

/** Run directly: serve on CROSSGRAIN_SMTP_PORT until SIGTERM or SIGINT. */
async function main(): Promise<void> {
  const handle = await startMailServer({ port: env.CROSSGRAIN_SMTP_PORT, dir: mailStoreDir() });
  logger.info({ host: HOST, port: handle.port, dir: handle.dir }, 'local mail: listening');
  const stop = (signal: NodeJS.Signals) => {
    logger.info({ signal }, 'local mail: stopping');
    handle.close().then(() => process.exit(0));
  };
  process.once('SIGTERM', stop);
  process.once('SIGINT', stop);
}

const runDirectly = process.argv[1] !== undefined && path.resolve(process.argv[1]) === fileURLToPath(import.meta.url);
if (runDirectly) {
  main().catch((error: unknown) => {
    logger.fatal({ err: error }, 'local mail: could not start');
    process.exit(1);
  });
}
