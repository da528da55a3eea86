/**
 * Outgoing mail. One function, `sendMail`, over one nodemailer SMTP transport:
 *
 * - `CROSSGRAIN_MAIL_MODE=local` (the default): to the fake mail server on
 *   127.0.0.1:CROSSGRAIN_SMTP_PORT (`mailServer.ts`), plain SMTP without TLS or
 *   authentication. Nothing leaves the machine; the outbox pages show what was sent.
 * - `CROSSGRAIN_MAIL_MODE=smtp`: to CROSSGRAIN_SMTP_HOST:PORT, with implicit TLS when
 *   CROSSGRAIN_SMTP_SECURE is true and STARTTLS required otherwise (mail carries
 *   single-use links, and credentials must not cross the wire in clear), authenticated
 *   when CROSSGRAIN_SMTP_USER is set.
 *
 * Message bodies hold single-use links, so they are never logged: only the recipient's
 * domain and the message id.
 *
 * `renderEmail` builds the product-styled HTML e-mail and its plain-text twin.
 */
import nodemailer, { type SMTPSentMessageInfo, type SMTPTransportOptions, type Transporter } from 'nodemailer';
import { z } from 'zod';
import { env, type Env } from './env';
import { badRequest } from './errors';
import { logger } from './logger';

export type MailTransport = Transporter<SMTPSentMessageInfo, SMTPTransportOptions>;

/** The settings the transport is built from. */
export type MailSettings = Pick<
  Env,
  | 'CROSSGRAIN_MAIL_MODE'
  | 'CROSSGRAIN_SMTP_HOST'
  | 'CROSSGRAIN_SMTP_PORT'
  | 'CROSSGRAIN_SMTP_USER'
  | 'CROSSGRAIN_SMTP_PASSWORD'
  | 'CROSSGRAIN_SMTP_SECURE'
  | 'CROSSGRAIN_MAIL_FROM'
>;

const TIMEOUTS = { connectionTimeout: 10_000, greetingTimeout: 10_000, socketTimeout: 30_000 };

/** The SMTP transport options for the given settings (no secrets are logged from here). */
export function transportOptions(settings: MailSettings = env): SMTPTransportOptions {
  if (settings.CROSSGRAIN_MAIL_MODE === 'local') {
    return { host: '127.0.0.1', port: settings.CROSSGRAIN_SMTP_PORT, secure: false, ignoreTLS: true, ...TIMEOUTS };
  }
  const options: SMTPTransportOptions = {
    host: settings.CROSSGRAIN_SMTP_HOST,
    port: settings.CROSSGRAIN_SMTP_PORT,
    secure: settings.CROSSGRAIN_SMTP_SECURE,
    requireTLS: !settings.CROSSGRAIN_SMTP_SECURE,
    ...TIMEOUTS,
  };
  if (settings.CROSSGRAIN_SMTP_USER) {
    options.auth = { user: settings.CROSSGRAIN_SMTP_USER, pass: settings.CROSSGRAIN_SMTP_PASSWORD ?? '' };
  }
  return options;
}

/** A new transport for the given settings; `sendMail` keeps one built from `env`. */
export function createMailTransport(settings: MailSettings = env): MailTransport {
  return nodemailer.createTransport(transportOptions(settings));
}

let sharedTransport: MailTransport | null = null;
function defaultTransport(): MailTransport {
  sharedTransport ??= createMailTransport(env);
  return sharedTransport;
}

const OutgoingMail = z.object({
  to: z.email('The recipient is not a valid e-mail address.'),
  subject: z
    .string()
    .min(1, 'The subject is empty.')
    .max(200, 'The subject is longer than 200 characters.')
    .refine((v) => !/[\r\n]/.test(v), 'The subject must be one line.'),
  text: z.string().min(1, 'The plain-text body is empty.'),
  html: z.string().min(1).optional(),
  /** Files attached to the message (a brief's PDF). */
  attachments: z
    .array(z.object({ filename: z.string().min(1).max(200), content: z.instanceof(Buffer), contentType: z.string().min(1) }))
    .max(5)
    .optional(),
});
export type OutgoingMail = z.infer<typeof OutgoingMail>;

export interface SentMail {
  /** The Message-ID header, angle brackets included. */
  messageId: string;
}

/** The part of an address after the last `@`, lower case: all the logs ever say about a recipient. */
export function recipientDomain(address: string): string {
  return address.slice(address.lastIndexOf('@') + 1).toLowerCase();
}

/**
 * Sends one message from CROSSGRAIN_MAIL_FROM to one recipient. Invalid input is a 400
 * and sends nothing; a refusal by the mail server rejects with nodemailer's error (its
 * `responseCode` says why). `options.transport` replaces the configured transport.
 */
export async function sendMail(message: OutgoingMail, options: { transport?: MailTransport } = {}): Promise<SentMail> {
  const parsed = OutgoingMail.safeParse(message);
  if (!parsed.success) throw badRequest(parsed.error.issues[0]?.message ?? 'The message is invalid.');
  const { to, subject, text, html, attachments } = parsed.data;
  const transport = options.transport ?? defaultTransport();
  const domain = recipientDomain(to);
  try {
    const info = await transport.sendMail({ from: env.CROSSGRAIN_MAIL_FROM, to, subject, text, html, ...(attachments ? { attachments } : {}) });
    logger.info({ messageId: info.messageId, recipientDomain: domain, mailMode: env.CROSSGRAIN_MAIL_MODE }, 'mail sent');
    return { messageId: info.messageId };
  } catch (error) {
    const failure = error as { code?: string; responseCode?: number };
    logger.warn(
      { recipientDomain: domain, mailMode: env.CROSSGRAIN_MAIL_MODE, code: failure.code, responseCode: failure.responseCode },
      'mail not sent',
    );
    throw error;
  }
}

// ---------------------------------------------------------------------------------------
// The e-mail template

export interface EmailContent {
  heading: string;
  /** Plain-text paragraphs; they are escaped, never interpreted as HTML. */
  paragraphs: readonly string[];
  /** The one call to action: a button in HTML, a labelled link in text. http(s) only. */
  action?: { label: string; url: string };
  /** The small print under the message. */
  footer?: string;
}

export interface RenderedEmail {
  html: string;
  text: string;
}

const DEFAULT_FOOTER =
  'Crossgrain sent this message automatically; replies are not read. If you did not expect it, you can ignore it.';

/** The palette of src/styles/global.css, inlined because mail clients ignore stylesheets. */
const colour = {
  linen50: '#fbfaf7',
  linen200: '#e8e4d9',
  ink900: '#18232b',
  ink700: '#34434d',
  ink500: '#5d6b74',
  estuary700: '#22536b',
  estuary900: '#143444',
  ochre500: '#b07a12',
};
const FONT = "'Noto Sans', 'Segoe UI', Arial, sans-serif";

function escapeHtml(value: string): string {
  return value
    .replace(/&/g, '&amp;')
    .replace(/</g, '&lt;')
    .replace(/>/g, '&gt;')
    .replace(/"/g, '&quot;')
    .replace(/'/g, '&#39;');
}

function checkedUrl(url: string): string {
  let parsed: URL;
  try {
    parsed = new URL(url);
  } catch {
    throw new Error('The e-mail button needs an absolute http(s) address.');
  }
  if (parsed.protocol !== 'https:' && parsed.protocol !== 'http:') {
    throw new Error('The e-mail button needs an absolute http(s) address.');
  }
  return parsed.href;
}

/**
 * Renders a plain, product-styled e-mail: the product name, a heading, paragraphs, at
 * most one button, and a footer line; plus the same content as plain text.
 *
 * @example
 * renderEmail({
 *   heading: 'You are invited to Crossgrain',
 *   paragraphs: ['Ada Lovelace added you to "Up-and-about" as an analyst.'],
 *   action: { label: 'Set your password', url: 'http://127.0.0.1:4321/invitations/abc' },
 * }).text
 * // "Crossgrain\n\nYou are invited to Crossgrain\n\nAda Lovelace added you ...\n\nSet your password:\nhttp://127.0.0.1:4321/invitations/abc\n\n--\nCrossgrain sent this message ..."
 */
export function renderEmail(content: EmailContent): RenderedEmail {
  const footer = content.footer ?? DEFAULT_FOOTER;
  const actionUrl = content.action ? checkedUrl(content.action.url) : null;

  const textParts = ['Crossgrain', content.heading, ...content.paragraphs];
  if (content.action && actionUrl) textParts.push(`${content.action.label}:\n${actionUrl}`);
  textParts.push(`--\n${footer}`);
  const text = `${textParts.join('\n\n')}\n`;

  const paragraphs = content.paragraphs
    .map((p) => `<p style="margin:0 0 14px;font-size:15px;line-height:1.55;color:${colour.ink700};">${escapeHtml(p)}</p>`)
    .join('\n');
  const button =
    content.action && actionUrl
      ? `<table role="presentation" cellpadding="0" cellspacing="0" style="margin:22px 0 8px;"><tr><td style="border-radius:3px;background:${colour.estuary700};">` +
        `<a href="${escapeHtml(actionUrl)}" style="display:inline-block;padding:10px 18px;font-family:${FONT};font-size:14px;font-weight:600;color:#ffffff;text-decoration:none;border-radius:3px;">${escapeHtml(content.action.label)}</a>` +
        `</td></tr></table>\n<p style="margin:12px 0 0;font-size:12px;line-height:1.5;color:${colour.ink500};">If the button does not work, copy this address into your browser:<br><span style="word-break:break-all;color:${colour.estuary700};">${escapeHtml(actionUrl)}</span></p>`
      : '';

  const html = `<!doctype html>
<html lang="en-GB">
<head>
<meta charset="utf-8">
<meta name="viewport" content="width=device-width, initial-scale=1">
<title>${escapeHtml(content.heading)}</title>
</head>
<body style="margin:0;padding:0;background:${colour.linen50};font-family:${FONT};color:${colour.ink900};">
<table role="presentation" width="100%" cellpadding="0" cellspacing="0" style="background:${colour.linen50};padding:24px 12px;">
<tr><td align="center">
<table role="presentation" width="100%" cellpadding="0" cellspacing="0" style="max-width:560px;background:#ffffff;border:1px solid ${colour.linen200};border-radius:5px;">
<tr><td style="background:${colour.estuary900};border-bottom:4px solid ${colour.ochre500};border-radius:5px 5px 0 0;padding:14px 24px;font-family:${FONT};font-size:17px;font-weight:600;color:#ffffff;">Crossgrain</td></tr>
<tr><td style="padding:24px 24px 20px;font-family:${FONT};">
<h1 style="margin:0 0 16px;font-size:21px;line-height:1.3;font-weight:600;color:${colour.ink900};">${escapeHtml(content.heading)}</h1>
${paragraphs}
${button}
</td></tr>
<tr><td style="padding:14px 24px;border-top:1px solid ${colour.linen200};font-family:${FONT};font-size:12px;line-height:1.5;color:${colour.ink500};">${escapeHtml(footer)}</td></tr>
</table>
</td></tr>
</table>
</body>
</html>
`;
  return { html, text };
}
