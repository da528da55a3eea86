/**
 * The outbox reader and its JSON endpoints: ids are checked before any file is touched,
 * and only administrators in local mail mode see anything. Messages are put in the
 * store by the real fake mail server, never written by hand.
 *
 * env.ts reads process.env once, at import, so the settings are written first and the
 * modules imported afterwards; the smtp-mode case re-imports after `vi.resetModules()`.
 */
import { mkdtemp, rm, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import path from 'node:path';
import type { APIContext } from 'astro';
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';

type OutboxModule = typeof import('./outbox');
type ListEndpoint = typeof import('@/pages/api/admin/outbox/index');
type OneEndpoint = typeof import('@/pages/api/admin/outbox/[id]');

let dataDir: string;
let outbox: OutboxModule;
let listEndpoint: ListEndpoint;
let oneEndpoint: OneEndpoint;
let close: () => Promise<void>;
let storedId: string;

const admin = { id: 'a', email: 'admin@tern-valley.example', displayName: 'Admin', isAdmin: true, memberships: [] };
const analyst = { ...admin, email: 'analyst@tern-valley.example', isAdmin: false };
type TestUser = typeof admin | null;

/** The parts of an Astro context the outbox endpoints read. */
function context(user: TestUser, url: string, params: Record<string, string> = {}): APIContext {
  return { locals: { user, requestId: 'test' }, url: new URL(url, 'http://127.0.0.1'), params } as unknown as APIContext;
}

async function call(route: ListEndpoint['GET'], ctx: APIContext): Promise<{ status: number; body: unknown }> {
  const response = await route(ctx);
  return { status: response.status, body: await response.json() };
}

/** The settings this file changes, put back afterwards for the files that run next. */
const savedEnv = Object.fromEntries(['CROSSGRAIN_MAIL_MODE', 'CROSSGRAIN_DATA_DIR'].map((key) => [key, process.env[key]]));

beforeAll(async () => {
  dataDir = await mkdtemp(path.join(tmpdir(), 'crossgrain-outbox-'));
  process.env.CROSSGRAIN_MAIL_MODE = 'local';
  process.env.CROSSGRAIN_DATA_DIR = path.join(dataDir, 'data');
  outbox = await import('./outbox');
  listEndpoint = await import('@/pages/api/admin/outbox/index');
  oneEndpoint = await import('@/pages/api/admin/outbox/[id]');
  const { startMailServer } = await import('@/lib/server/mailServer');
  const { createMailTransport, sendMail } = await import('@/lib/server/mail');
  const { env } = await import('@/lib/server/env');
  const handle = await startMailServer({ port: 0, dir: outbox.mailStoreDir() });
  close = handle.close;
  const transport = createMailTransport({ ...env, CROSSGRAIN_SMTP_PORT: handle.port });
  await sendMail({ to: 'auditor@tern-valley.example', subject: 'Kept for the outbox', text: 'Hello.' }, { transport });
  transport.close();
  storedId = (await outbox.listMessages()).messages[0].id;

  // A file beside the store that a traversing id would reach.
  await writeFile(path.join(dataDir, 'data', 'secret.json'), '{"id":"secret"}');
  await writeFile(path.join(dataDir, 'data', 'secret.eml'), 'Subject: secret\r\n\r\nsecret');
});

afterAll(async () => {
  for (const [key, value] of Object.entries(savedEnv)) {
    if (value === undefined) delete process.env[key];
    else process.env[key] = value;
  }
  await close?.();
  if (dataDir) await rm(dataDir, { recursive: true, force: true });
});

describe('message ids', () => {
  it('accepts exactly the ids the server hands out', () => {
    expect(outbox.isMessageId(outbox.newMessageId(new Date('2026-03-05T10:11:12.345Z')))).toBe(true);
    expect(outbox.newMessageId(new Date('2026-03-05T10:11:12.345Z'))).toMatch(/^20260305T101112345Z-[0-9a-f]{12}$/);
    expect(outbox.isMessageId(storedId)).toBe(true);
  });

  it.each([
    '../secret',
    '..%2fsecret',
    `${'../'.repeat(8)}etc/passwd`,
    '/etc/passwd',
    '20260305T101112345Z-0f3a9c2b71de/../../secret',
    '20260305T101112345Z-0f3a9c2b71de.json',
    '20260305T101112345Z-0F3A9C2B71DE',
    '20260305T101112345Z-0f3a9c2b71de\n',
    '',
  ])('refuses %j before touching a file', async (id) => {
    expect(outbox.isMessageId(id)).toBe(false);
    expect(() => outbox.messagePaths(id)).toThrow('That is not a valid message id.');
    await expect(outbox.readMessage(id)).rejects.toMatchObject({ status: 400, code: 'bad-request' });
  });

  it('answers 404 for a well-formed id that was never stored', async () => {
    await expect(outbox.readMessage('20200101T000000000Z-000000000000')).rejects.toMatchObject({ status: 404 });
  });

  it('reads a stored message by its id', async () => {
    const message = await outbox.readMessage(storedId);
    expect(message.subject).toBe('Kept for the outbox');
    expect(message.to).toBe('auditor@tern-valley.example');
  });

  it('treats a missing store folder as an empty outbox and refuses bad paging', async () => {
    const listing = await outbox.listMessages({ dir: path.join(dataDir, 'nowhere') });
    expect(listing).toEqual({ messages: [], total: 0, page: 1, pageSize: 25, pageCount: 1 });
    await expect(outbox.listMessages({ page: 0 })).rejects.toMatchObject({ status: 400 });
    await expect(outbox.listMessages({ pageSize: 101 })).rejects.toMatchObject({ status: 400 });
  });
});

describe('the HTML preview', () => {
  const hostile =
    '<h1>Static</h1><script>top.location="https://elsewhere.example"</script></iframe>' +
    '<script>document.title="taken"</script><a href="https://x.example/?q=<script>">x</a>';

  it('keeps the whole body inside a sandboxed srcdoc, even after the nonce middleware', async () => {
    const { addNonceToScripts } = await import('@/lib/server/securityHeaders');
    const frame = outbox.previewFrame(hostile, { title: 'Preview "x" <b>', className: 'w-full', testId: 'message-html' });
    // The middleware stamps a nonce onto every <script it finds in a page; none may be found here.
    expect(addNonceToScripts(frame, '0123456789abcdef0123456789abcdef')).toBe(frame);
    expect(frame.match(/</g)).toHaveLength(2);
    expect(frame.startsWith('<iframe sandbox="" ')).toBe(true);
    expect(frame.endsWith('></iframe>')).toBe(true);
    const srcdoc = /srcdoc="([^"]*)"/.exec(frame)?.[1] ?? '';
    const decoded = srcdoc.replace(/&lt;/g, '<').replace(/&gt;/g, '>').replace(/&quot;/g, '"').replace(/&amp;/g, '&');
    expect(decoded).toBe(hostile);
  });

  it('lists links percent-encoded, so they are safe in an attribute', () => {
    expect(outbox.linksIn(hostile, 'See https://tern-valley.example/a?b=1&c=2 and http://x.example/"q"')).toEqual([
      'https://x.example/?q=%3Cscript%3E',
      'https://tern-valley.example/a?b=1&c=2',
      'http://x.example/',
    ]);
    expect(outbox.linksIn('<a href="javascript:alert(1)">x</a><a href="mailto:a@b.example">m</a>', '')).toEqual([]);
  });
});

describe('who may see the outbox', () => {
  it.each([
    [null, 'local', 'signed-out'],
    [null, 'smtp', 'signed-out'],
    [{ isAdmin: false }, 'local', 'hidden'],
    [{ isAdmin: true }, 'smtp', 'hidden'],
    [{ isAdmin: false }, 'smtp', 'hidden'],
    [{ isAdmin: true }, 'local', 'allowed'],
  ] as const)('user %j in %s mode: %s', (user, mode, expected) => {
    expect(outbox.outboxAccess(user, mode)).toBe(expected);
  });
});

describe('GET /api/admin/outbox', () => {
  it('answers 401 signed out and 404 to a non-administrator', async () => {
    expect(await call(listEndpoint.GET, context(null, '/api/admin/outbox'))).toMatchObject({
      status: 401,
      body: { error: { code: 'unauthenticated' } },
    });
    expect(await call(listEndpoint.GET, context(analyst, '/api/admin/outbox'))).toMatchObject({
      status: 404,
      body: { error: { code: 'not-found' } },
    });
  });

  it('lists the kept messages for an administrator', async () => {
    const { status, body } = await call(listEndpoint.GET, context(admin, '/api/admin/outbox?pageSize=10'));
    expect(status).toBe(200);
    expect(body).toMatchObject({ total: 1, page: 1, pageSize: 10, pageCount: 1 });
    expect((body as { messages: { id: string; subject: string }[] }).messages).toEqual([
      expect.objectContaining({ id: storedId, subject: 'Kept for the outbox', to: ['auditor@tern-valley.example'] }),
    ]);
  });

  it('refuses a bad page size with field messages', async () => {
    const { status, body } = await call(listEndpoint.GET, context(admin, '/api/admin/outbox?pageSize=500'));
    expect(status).toBe(400);
    expect(body).toMatchObject({ error: { code: 'validation-failed', details: [{ path: 'pageSize' }] } });
  });
});

describe('GET /api/admin/outbox/:id', () => {
  it('answers 401 signed out and 404 to a non-administrator, even for a stored id', async () => {
    expect((await call(oneEndpoint.GET, context(null, `/api/admin/outbox/${storedId}`, { id: storedId }))).status).toBe(401);
    expect((await call(oneEndpoint.GET, context(analyst, `/api/admin/outbox/${storedId}`, { id: storedId }))).status).toBe(404);
  });

  it('returns the parsed message to an administrator', async () => {
    const { status, body } = await call(oneEndpoint.GET, context(admin, `/api/admin/outbox/${storedId}`, { id: storedId }));
    expect(status).toBe(200);
    expect(body).toMatchObject({
      id: storedId,
      from: 'Crossgrain <crossgrain@tern-valley.example>',
      to: 'auditor@tern-valley.example',
      subject: 'Kept for the outbox',
      html: null,
    });
    expect((body as { text: string }).text.trim()).toBe('Hello.');
  });

  it('refuses a traversing id with 400 and does not read the file it points at', async () => {
    const { status, body } = await call(oneEndpoint.GET, context(admin, '/api/admin/outbox/x', { id: '../secret' }));
    expect(status).toBe(400);
    expect(JSON.stringify(body)).not.toContain('secret"');
    expect(body).toMatchObject({ error: { message: 'That is not a valid message id.' } });
  });
});

describe('in smtp mail mode', () => {
  it('hides the outbox from administrators too', async () => {
    vi.resetModules();
    process.env.CROSSGRAIN_MAIL_MODE = 'smtp';
    try {
      const list = await import('@/pages/api/admin/outbox/index');
      const one = await import('@/pages/api/admin/outbox/[id]');
      expect((await call(list.GET, context(admin, '/api/admin/outbox'))).status).toBe(404);
      expect((await call(one.GET, context(admin, `/api/admin/outbox/${storedId}`, { id: storedId }))).status).toBe(404);
      expect((await call(list.GET, context(null, '/api/admin/outbox'))).status).toBe(401);
    } finally {
      process.env.CROSSGRAIN_MAIL_MODE = 'local';
      vi.resetModules();
    }
  });
});
