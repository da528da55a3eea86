/**
 * Mail end to end on loopback: the fake mail server on a free port in a temporary
 * folder, `sendMail` through the configured local transport, and the stored files read
 * back through the outbox reader.
 *
 * env.ts reads process.env once, at import, so the settings are written first and the
 * modules imported afterwards.
 */
import { spawn } from 'node:child_process';
import { mkdtemp, readdir, readFile, rm } from 'node:fs/promises';
import { createServer, connect } from 'node:net';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';

type MailModule = typeof import('./mail');
type OutboxModule = typeof import('@/features/admin/outbox');
type ServerModule = typeof import('./mailServer');

/** A TCP port that was free a moment ago on 127.0.0.1. */
async function freePort(): Promise<number> {
  return new Promise((resolve, reject) => {
    const probe = createServer();
    probe.once('error', reject);
    probe.listen(0, '127.0.0.1', () => {
      const address = probe.address();
      const port = typeof address === 'object' && address ? address.port : 0;
      probe.close(() => resolve(port));
    });
  });
}

/** Resolves once something accepts connections on the port. */
async function waitForPort(port: number, deadlineMs: number): Promise<void> {
  const until = Date.now() + deadlineMs;
  while (Date.now() < until) {
    const open = await new Promise<boolean>((resolve) => {
      const socket = connect(port, '127.0.0.1');
      socket.once('connect', () => {
        socket.destroy();
        resolve(true);
      });
      socket.once('error', () => resolve(false));
    });
    if (open) return;
    await new Promise((resolve) => setTimeout(resolve, 100));
  }
  throw new Error(`Nothing listened on port ${port} within ${deadlineMs} ms`);
}

let dataDir: string;
let storeDir: string;
let mail: MailModule;
let outbox: OutboxModule;
let mailServer: ServerModule;
let handle: Awaited<ReturnType<ServerModule['startMailServer']>>;

/** The settings this file changes, put back afterwards for the files that run next. */
const savedEnv = Object.fromEntries(['CROSSGRAIN_MAIL_MODE', 'CROSSGRAIN_SMTP_PORT', 'CROSSGRAIN_DATA_DIR'].map((key) => [key, process.env[key]]));

beforeAll(async () => {
  dataDir = await mkdtemp(path.join(tmpdir(), 'crossgrain-mail-'));
  const port = await freePort();
  process.env.CROSSGRAIN_MAIL_MODE = 'local';
  process.env.CROSSGRAIN_SMTP_PORT = String(port);
  process.env.CROSSGRAIN_DATA_DIR = dataDir;
  mail = await import('./mail');
  outbox = await import('@/features/admin/outbox');
  mailServer = await import('./mailServer');
  storeDir = outbox.mailStoreDir();
  handle = await mailServer.startMailServer({ port, dir: storeDir });
});

afterAll(async () => {
  for (const [key, value] of Object.entries(savedEnv)) {
    if (value === undefined) delete process.env[key];
    else process.env[key] = value;
  }
  await handle?.close();
  if (dataDir) await rm(dataDir, { recursive: true, force: true });
});

const storedNames = async () => (await readdir(storeDir)).sort();

describe('sending through the local fake mail server', () => {
  it('stores the raw message and an atomic summary that the outbox reads back', async () => {
    expect(storeDir).toBe(path.join(dataDir, 'mail'));
    const body = mail.renderEmail({
      heading: 'You are invited to Crossgrain',
      paragraphs: ['Mira Castell added you to "Up-and-about" as a clinician lead.'],
      action: { label: 'Set your password', url: 'http://127.0.0.1:4329/invitations/accept?token=abc123&x=1' },
    });
    const before = await storedNames();
    const sent = await mail.sendMail({
      to: 'clinician@tern-valley.example',
      subject: 'Your invitation to Crossgrain',
      ...body,
    });
    expect(sent.messageId).toMatch(/^<.+@.+>$/);

    const added = (await storedNames()).filter((name) => !before.includes(name));
    expect(added).toHaveLength(2);
    const id = added[0].replace(/\.eml$/, '');
    expect(outbox.isMessageId(id)).toBe(true);
    expect(added).toEqual([`${id}.eml`, `${id}.json`]);
    // No temporary file is left behind by the write-then-rename.
    expect((await storedNames()).filter((name) => name.startsWith('.'))).toEqual([]);

    const summary = outbox.MessageSummary.parse(JSON.parse(await readFile(path.join(storeDir, `${id}.json`), 'utf8')));
    expect(summary).toMatchObject({
      id,
      from: 'Crossgrain <crossgrain@tern-valley.example>',
      to: ['clinician@tern-valley.example'],
      subject: 'Your invitation to Crossgrain',
    });
    const raw = await readFile(path.join(storeDir, `${id}.eml`));
    expect(summary.size).toBe(raw.length);
    expect(raw.toString('utf8')).toContain(`Message-ID: ${sent.messageId}`);
    expect(Math.abs(Date.parse(summary.receivedAt) - Date.now())).toBeLessThan(60_000);

    const message = await outbox.readMessage(id);
    expect(message.subject).toBe('Your invitation to Crossgrain');
    expect(message.from).toBe('Crossgrain <crossgrain@tern-valley.example>');
    expect(message.to).toBe('clinician@tern-valley.example');
    expect(message.date).not.toBeNull();
    expect(message.text.trim()).toBe(body.text.trim());
    expect(message.html).toContain('<h1');
    expect(message.html).toContain('You are invited to Crossgrain');
    expect(message.html).toContain('&quot;Up-and-about&quot;');
    expect(message.links).toEqual(['http://127.0.0.1:4329/invitations/accept?token=abc123&x=1']);

    const listing = await outbox.listMessages({ pageSize: 1 });
    expect(listing.messages[0]).toEqual(summary);
  });

  it('lists messages newest first, one page at a time', async () => {
    const subjects = ['First of three', 'Second of three', 'Third of three'];
    for (const subject of subjects) {
      await mail.sendMail({ to: 'analyst@tern-valley.example', subject, text: `${subject}.` });
      // Ids carry the arrival millisecond; a short pause keeps the three apart.
      await new Promise((resolve) => setTimeout(resolve, 5));
    }
    const first = await outbox.listMessages({ page: 1, pageSize: 2 });
    const second = await outbox.listMessages({ page: 2, pageSize: 2 });
    expect(first.messages.map((m) => m.subject)).toEqual(['Third of three', 'Second of three']);
    expect(second.messages[0].subject).toBe('First of three');
    expect(first.total).toBe(second.total);
    expect(first.pageCount).toBe(Math.ceil(first.total / 2));
    const past = await outbox.listMessages({ page: first.pageCount + 1, pageSize: 2 });
    expect(past.messages).toEqual([]);

    const plain = await outbox.readMessage(first.messages[1].id);
    expect(plain.html).toBeNull();
    expect(plain.text.trim()).toBe('Second of three.');
  });

  it('refuses a message over the 10 MB limit with 552 and stores nothing', async () => {
    const before = await storedNames();
    const oversized = 'x'.repeat(mailServer.MAIL_SIZE_LIMIT_BYTES + 1024);
    await expect(
      mail.sendMail({ to: 'auditor@tern-valley.example', subject: 'Too large', text: oversized }),
    ).rejects.toMatchObject({ responseCode: 552 });
    expect(await storedNames()).toEqual(before);

    // The server is still serving after the refusal.
    await expect(mail.sendMail({ to: 'auditor@tern-valley.example', subject: 'Small', text: 'ok' })).resolves.toHaveProperty('messageId');
  });

  it('refuses invalid input with a clear 400 and sends nothing', async () => {
    const before = await storedNames();
    await expect(mail.sendMail({ to: 'not-an-address', subject: 'Hello', text: 'Hi' })).rejects.toMatchObject({
      status: 400,
      message: 'The recipient is not a valid e-mail address.',
    });
    await expect(
      mail.sendMail({ to: 'admin@tern-valley.example', subject: 'Hello\r\nBcc: someone@elsewhere.example', text: 'Hi' }),
    ).rejects.toMatchObject({ status: 400, message: 'The subject must be one line.' });
    await expect(mail.sendMail({ to: 'admin@tern-valley.example', subject: 'Hello', text: '' })).rejects.toMatchObject({
      status: 400,
    });
    expect(await storedNames()).toEqual(before);
  });
});

describe('the e-mail template', () => {
  it('escapes content, keeps one button, and writes a plain-text twin', () => {
    const rendered = mail.renderEmail({
      heading: 'Reset <your> password',
      paragraphs: ['Someone asked to reset the password of <b>analyst</b>.', 'The link works once, for one hour.'],
      action: { label: 'Choose a new password', url: 'https://crossgrain.tern-valley.example/reset?token="q"' },
      footer: 'Tern Valley Health Partnership',
    });
    expect(rendered.html).toContain('Reset &lt;your&gt; password');
    expect(rendered.html).toContain('&lt;b&gt;analyst&lt;/b&gt;');
    expect(rendered.html).not.toContain('<b>');
    expect(rendered.html.match(/<a /g)).toHaveLength(1);
    expect(rendered.html).toContain('href="https://crossgrain.tern-valley.example/reset?token=%22q%22"');
    expect(rendered.text).toBe(
      [
        'Crossgrain',
        'Reset <your> password',
        'Someone asked to reset the password of <b>analyst</b>.',
        'The link works once, for one hour.',
        'Choose a new password:\nhttps://crossgrain.tern-valley.example/reset?token=%22q%22',
        '--\nTern Valley Health Partnership',
      ].join('\n\n') + '\n',
    );
  });

  it('refuses a button that is not an http(s) address', () => {
    expect(() =>
      mail.renderEmail({ heading: 'x', paragraphs: [], action: { label: 'Go', url: 'javascript:alert(1)' } }),
    ).toThrow('absolute http(s) address');
    expect(() => mail.renderEmail({ heading: 'x', paragraphs: [], action: { label: 'Go', url: '/relative' } })).toThrow(
      'absolute http(s) address',
    );
  });
});

describe('the transport settings', () => {
  const base = {
    CROSSGRAIN_MAIL_MODE: 'local',
    CROSSGRAIN_SMTP_HOST: 'smtp.tern-valley.example',
    CROSSGRAIN_SMTP_PORT: 2525,
    CROSSGRAIN_SMTP_USER: undefined,
    CROSSGRAIN_SMTP_PASSWORD: undefined,
    CROSSGRAIN_SMTP_SECURE: false,
    CROSSGRAIN_MAIL_FROM: 'Crossgrain <crossgrain@tern-valley.example>',
  } as const;

  it('sends local mail to loopback without TLS or credentials, whatever the host setting says', () => {
    const options = mail.transportOptions({ ...base, CROSSGRAIN_SMTP_USER: 'ignored', CROSSGRAIN_SMTP_PASSWORD: 'ignored' });
    expect(options).toMatchObject({ host: '127.0.0.1', port: 2525, secure: false, ignoreTLS: true });
    expect(options.auth).toBeUndefined();
  });

  it('sends real mail to the configured host, with TLS required and credentials when given', () => {
    const starttls = mail.transportOptions({
      ...base,
      CROSSGRAIN_MAIL_MODE: 'smtp',
      CROSSGRAIN_SMTP_PORT: 587,
      CROSSGRAIN_SMTP_USER: 'crossgrain',
      CROSSGRAIN_SMTP_PASSWORD: 'relay-secret',
    });
    expect(starttls).toMatchObject({
      host: 'smtp.tern-valley.example',
      port: 587,
      secure: false,
      requireTLS: true,
      auth: { user: 'crossgrain', pass: 'relay-secret' },
    });
    expect(starttls.ignoreTLS).toBeUndefined();
    const implicit = mail.transportOptions({ ...base, CROSSGRAIN_MAIL_MODE: 'smtp', CROSSGRAIN_SMTP_PORT: 465, CROSSGRAIN_SMTP_SECURE: true });
    expect(implicit).toMatchObject({ port: 465, secure: true, requireTLS: false });
    expect(implicit.auth).toBeUndefined();
  });
});

describe('the mail server as its own process', () => {
  it('serves on CROSSGRAIN_SMTP_PORT when run with tsx and exits cleanly on SIGTERM', async () => {
    const port = await freePort();
    const ownDataDir = await mkdtemp(path.join(tmpdir(), 'crossgrain-mail-process-'));
    const child = spawn(path.resolve('node_modules/.bin/tsx'), ['src/lib/server/mailServer.ts'], {
      env: { ...process.env, CROSSGRAIN_SMTP_PORT: String(port), CROSSGRAIN_DATA_DIR: ownDataDir },
      stdio: 'ignore',
    });
    try {
      await waitForPort(port, 20_000);
      const transport = mail.createMailTransport({
        CROSSGRAIN_MAIL_MODE: 'local',
        CROSSGRAIN_SMTP_HOST: '127.0.0.1',
        CROSSGRAIN_SMTP_PORT: port,
        CROSSGRAIN_SMTP_SECURE: false,
        CROSSGRAIN_MAIL_FROM: 'Crossgrain <crossgrain@tern-valley.example>',
      });
      await mail.sendMail({ to: 'admin@tern-valley.example', subject: 'From the own process', text: 'Hello.' }, { transport });
      transport.close();
      const listing = await outbox.listMessages({ dir: path.join(ownDataDir, 'mail') });
      expect(listing.messages.map((m) => m.subject)).toEqual(['From the own process']);

      const exited = new Promise<number | null>((resolve) => child.once('exit', (code) => resolve(code)));
      child.kill('SIGTERM');
      expect(await exited).toBe(0);
    } finally {
      if (child.exitCode === null && child.signalCode === null) child.kill('SIGKILL');
      await rm(ownDataDir, { recursive: true, force: true });
    }
  });
});
