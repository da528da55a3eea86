/**
 * Sessions over HTTP against the built server: token rotation, idle and absolute expiry
 * (401 on the API, a redirect on pages), sign-out, deactivation, personal API tokens and
 * the cross-site request guard (OWASP ASVS 5.0 session management, shared design
 * standards, application security).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { QueryTypes } from 'sequelize';
import { hashPassword } from '@/lib/server/passwords';
import { hashToken, SESSION_COOKIE } from '@/lib/server/session';
import { readdirSync, readFileSync } from 'node:fs';
import path from 'node:path';
import { appUrl, mailDir, startServer, type ServerHandle } from '../browser/harness';
import { addMember, closeOwnerDb, makeInitiative, makeUser, ownerDb } from '../support/factories';
import { ApiClient } from '../support/http';

const password = 'lantern-estuary-heron';
let server: ServerHandle;
let passwordHash: string;

beforeAll(async () => {
  server = await startServer();
  passwordHash = await hashPassword(password);
});

afterAll(async () => {
  await server?.close();
  await closeOwnerDb();
});

async function signedIn(options: { isAdmin?: boolean } = {}) {
  const user = await makeUser({ passwordHash, isAdmin: options.isAdmin });
  const client = new ApiClient();
  const response = await client.signIn(user.email, password);
  expect(response.status).toBe(204);
  return { user, client };
}

/** The reset token from the newest message the local mail server kept for an address. */
async function resetTokenFor(email: string): Promise<string> {
  for (let attempt = 0; attempt < 50; attempt += 1) {
    const files = readdirSync(mailDir).filter((f) => f.endsWith('.json')).sort().reverse();
    for (const file of files) {
      const summary = JSON.parse(readFileSync(path.join(mailDir, file), 'utf8')) as { id: string; to: string[] | string; subject: string };
      const to = Array.isArray(summary.to) ? summary.to : [summary.to];
      if (!to.some((t) => t.includes(email)) || !/reset/i.test(summary.subject)) continue;
      const eml = readFileSync(path.join(mailDir, `${summary.id}.eml`), 'utf8').replace(/=\r?\n/g, '').replace(/=3D/g, '=');
      const token = /reset-password\?token=([A-Za-z0-9_%-]+)/.exec(eml)?.[1];
      if (token) return decodeURIComponent(token);
    }
    await new Promise((resolve) => setTimeout(resolve, 100));
  }
  throw new Error(`no reset message for ${email}`);
}

/** Moves the session's clock back, as if time had passed. */
async function ageSession(token: string, column: 'last_seen_at' | 'created_at', minutes: number) {
  await ownerDb().query(`UPDATE sessions SET ${column} = now() - make_interval(mins => :minutes) WHERE id = :id`, {
    replacements: { minutes, id: hashToken(token) },
  });
}

describe('signing in over HTTP', () => {
  it('sets an HttpOnly, SameSite=Lax cookie and answers /api/me with the memberships', async () => {
    const user = await makeUser({ passwordHash });
    const initiative = await makeInitiative('Bay ward');
    await addMember(initiative.id, user.id, 'analyst');
    const client = new ApiClient();
    const response = await client.signIn(user.email, password);
    expect(response.status).toBe(204);
    const cookie = response.headers.getSetCookie().find((c) => c.startsWith(`${SESSION_COOKIE}=`)) ?? '';
    expect(cookie).toMatch(/HttpOnly/i);
    expect(cookie).toMatch(/SameSite=Lax/i);
    const me = await client.request('GET', '/api/me');
    expect(me.status).toBe(200);
    expect(await me.json()).toMatchObject({
      id: user.id,
      memberships: [{ initiativeId: initiative.id, initiativeName: 'Bay ward', role: 'analyst' }],
    });
  });

  it('replaces the session token at sign-in, whatever the browser held', async () => {
    const { user, client } = await signedIn();
    const before = client.cookie(SESSION_COOKIE);
    expect(before).toBeTruthy();
    await client.signIn(user.email, password);
    const after = client.cookie(SESSION_COOKIE);
    expect(after).toBeTruthy();
    expect(after).not.toBe(before);
  });

  it('refuses a bad body with field messages', async () => {
    const response = await new ApiClient().request('POST', '/api/auth/sign-in', { email: 'not-an-address' });
    expect(response.status).toBe(400);
    const body = await response.json();
    expect(body.error.code).toBe('validation-failed');
    expect(body.error.details.map((d: { path: string }) => d.path).sort()).toEqual(['email', 'password']);
  });
});

describe('expiry', () => {
  it('ends an idle session: 401 on the API and a redirect on pages', async () => {
    const { client } = await signedIn();
    await ageSession(client.cookie(SESSION_COOKIE)!, 'last_seen_at', 31);
    const page = await client.request('GET', '/profile');
    expect(page.status).toBe(302);
    expect(page.headers.get('location')).toMatch(/^\/sign-in\?next=%2Fprofile/);
    expect((await client.request('GET', '/api/me')).status).toBe(401);
  });

  it('ends a session past its absolute lifetime even while active', async () => {
    const { client } = await signedIn();
    const token = client.cookie(SESSION_COOKIE)!;
    await ageSession(token, 'created_at', 12 * 60 + 1);
    expect((await client.request('GET', '/api/me')).status).toBe(401);
    // The session row is gone, not merely refused.
    const rows = await ownerDb().query('SELECT 1 FROM sessions WHERE id = :id', { replacements: { id: hashToken(token) }, type: QueryTypes.SELECT });
    expect(rows).toHaveLength(0);
  });

  it('keeps a session that is used within the idle timeout', async () => {
    const { client } = await signedIn();
    await ageSession(client.cookie(SESSION_COOKIE)!, 'last_seen_at', 29);
    expect((await client.request('GET', '/api/me')).status).toBe(200);
  });
});

describe('ending sessions', () => {
  it('signs out: the old token no longer works', async () => {
    const { client } = await signedIn();
    const token = client.cookie(SESSION_COOKIE)!;
    expect((await client.request('POST', '/api/auth/sign-out')).status).toBe(204);
    const replay = new ApiClient();
    replay.setCookie(SESSION_COOKIE, token);
    expect((await replay.request('GET', '/api/me')).status).toBe(401);
  });

  it('ends every session of a deactivated user', async () => {
    const admin = await signedIn({ isAdmin: true });
    const target = await makeUser({ passwordHash });
    const laptop = new ApiClient();
    const phone = new ApiClient();
    await laptop.signIn(target.email, password);
    await phone.signIn(target.email, password);
    const response = await admin.client.request('PATCH', `/api/admin/users/${target.id}`, { status: 'deactivated' });
    expect(response.status).toBe(204);
    expect((await laptop.request('GET', '/api/me')).status).toBe(401);
    expect((await phone.request('GET', '/api/me')).status).toBe(401);
    expect((await laptop.signIn(target.email, password)).status).toBe(401);
  });
});

describe('a forgotten password', () => {
  it('is reset by a single-use e-mailed link that ends every other session', async () => {
    const { user, client: oldSession } = await signedIn();
    const asked = await new ApiClient().request('POST', '/api/auth/forgot-password', { email: user.email });
    expect(asked.status).toBe(202);
    // The same answer for an address with no account.
    const unknown = await new ApiClient().request('POST', '/api/auth/forgot-password', { email: 'nobody@test.example' });
    expect(unknown.status).toBe(202);
    expect(await unknown.json()).toEqual(await asked.clone().json());

    const token = await resetTokenFor(user.email);
    const weak = await new ApiClient().request('POST', '/api/auth/reset-password', { token, password: 'qwerty123456' });
    expect(weak.status).toBe(422);
    const reset = await new ApiClient().request('POST', '/api/auth/reset-password', { token, password: 'reed-warbler-estuary' });
    expect(reset.status).toBe(204);
    expect((await oldSession.request('GET', '/api/me')).status).toBe(401);
    expect((await new ApiClient().signIn(user.email, password)).status).toBe(401);
    expect((await new ApiClient().signIn(user.email, 'reed-warbler-estuary')).status).toBe(204);
    const again = await new ApiClient().request('POST', '/api/auth/reset-password', { token, password: 'another-long-phrase' });
    expect(again.status).toBe(422);
    expect((await again.json()).error.code).toBe('link-used');
  });
});

describe('personal API tokens', () => {
  it('act as their owner, are audited on every use, and stop at revocation', async () => {
    const { user, client } = await signedIn();
    const created = await client.request('POST', '/api/me/tokens', { name: 'nightly export' });
    expect(created.status).toBe(201);
    const { token, item } = await created.json();
    expect(token).toMatch(/^cgt_/);
    const stored = await ownerDb().query<{ token_hash: string }>('SELECT token_hash FROM api_tokens WHERE id = :id', {
      replacements: { id: item.id }, type: QueryTypes.SELECT,
    });
    expect(stored[0].token_hash).toBe(hashToken(token));
    expect(stored[0].token_hash).not.toContain(token);

    const script = new ApiClient(token);
    const me = await script.request('GET', '/api/me');
    expect(me.status).toBe(200);
    expect((await me.json()).id).toBe(user.id);
    const uses = await ownerDb().query<{ details: { path: string } }>(
      "SELECT details FROM audit_events WHERE action = 'token.used' AND subject_id = :id",
      { replacements: { id: item.id }, type: QueryTypes.SELECT },
    );
    expect(uses.map((u) => u.details.path)).toEqual(['/api/me']);
    // A token cannot mint more tokens.
    expect((await script.request('POST', '/api/me/tokens', { name: 'child' })).status).toBe(403);

    expect((await client.request('DELETE', `/api/me/tokens/${item.id}`)).status).toBe(204);
    expect((await script.request('GET', '/api/me')).status).toBe(401);
  });
});

describe('issue 13 regressions', () => {
  it('never redirects off the site after signing in, on the page or its form', async () => {
    const { client } = await signedIn();
    const page = await client.request('GET', '/sign-in?next=%2F%09%2Fevil.example');
    expect(page.status).toBe(302);
    expect(page.headers.get('location')).toBe('/');
    const user = await makeUser({ passwordHash });
    const form = new URLSearchParams({ email: user.email, password, next: '/\t/evil.example' });
    const posted = await fetch(`${appUrl}/sign-in`, {
      method: 'POST', redirect: 'manual', body: form,
      headers: { 'Content-Type': 'application/x-www-form-urlencoded', Origin: appUrl },
    });
    expect(posted.status).toBe(302);
    expect(posted.headers.get('location')).toBe('/');
  });

  it('records the socket’s address, not a forged X-Forwarded-For, when no proxy is trusted', async () => {
    const user = await makeUser({ passwordHash });
    const refused = await new ApiClient().request('POST', '/api/auth/sign-in', { email: user.email, password: 'not-the-password' }, { 'X-Forwarded-For': '203.0.113.77' });
    expect(refused.status).toBe(401);
    const attempts = await ownerDb().query<{ client_address: string }>(
      "SELECT client_address FROM signin_attempts WHERE account_key = encode(sha256(convert_to('crossgrain-signin:' || :email, 'UTF8')), 'hex')",
      { replacements: { email: user.email }, type: QueryTypes.SELECT },
    );
    expect(attempts.map((a) => a.client_address)).toEqual(['127.0.0.1']);
    const audited = await ownerDb().query<{ client_address: string }>(
      "SELECT client_address FROM audit_events WHERE action = 'auth.sign-in-failed' AND subject_id = :id",
      { replacements: { id: user.id }, type: QueryTypes.SELECT },
    );
    expect(audited.map((a) => a.client_address)).toEqual(['127.0.0.1']);
  });

  it('ends API tokens with a password reset, and keeps them dead when a deactivated user is reactivated', async () => {
    const { user, client } = await signedIn();
    const mint = async (who: ApiClient, name: string) => ((await (await who.request('POST', '/api/me/tokens', { name })).json()) as { token: string }).token;
    const beforeReset = new ApiClient(await mint(client, 'before reset'));
    expect((await beforeReset.request('GET', '/api/me')).status).toBe(200);
    expect((await new ApiClient().request('POST', '/api/auth/forgot-password', { email: user.email })).status).toBe(202);
    const token = await resetTokenFor(user.email);
    expect((await new ApiClient().request('POST', '/api/auth/reset-password', { token, password: 'reed-warbler-estuary' })).status).toBe(204);
    expect((await beforeReset.request('GET', '/api/me')).status).toBe(401);

    const admin = await signedIn({ isAdmin: true });
    const target = await signedIn();
    const script = new ApiClient(await mint(target.client, 'nightly'));
    expect((await script.request('GET', '/api/me')).status).toBe(200);
    expect((await admin.client.request('PATCH', `/api/admin/users/${target.user.id}`, { status: 'deactivated' })).status).toBe(204);
    expect((await admin.client.request('PATCH', `/api/admin/users/${target.user.id}`, { status: 'active' })).status).toBe(204);
    expect((await script.request('GET', '/api/me')).status).toBe(401);
  });

  it('refuses a NUL or a lone surrogate in text with a 400 naming the field, not a 500', async () => {
    const { client } = await signedIn();
    // Sent as JSON escapes, as a script would: JSON.parse turns them into the characters.
    for (const name of ['nightly\\u0000export', 'broken \\ud800 name']) {
      const raw = await fetch(`${appUrl}/api/me/tokens`, {
        method: 'POST', body: `{"name":"${name}"}`,
        headers: { 'Content-Type': 'application/json', Cookie: `${SESSION_COOKIE}=${client.cookie(SESSION_COOKIE)}` },
      });
      expect(raw.status).toBe(400);
      const body = (await raw.json()) as { error: { code: string; details: { path: string }[] } };
      expect(body.error.code).toBe('validation-failed');
      expect(body.error.details[0].path).toBe('name');
    }
  });
});

describe('cross-site requests', () => {
  it('refuses a state-changing request from another origin, whatever its content type', async () => {
    const { client } = await signedIn();
    const response = await client.request('POST', '/api/me/tokens', { name: 'forged' }, { Origin: 'https://elsewhere.example' });
    expect(response.status).toBe(403);
    expect((await response.json()).error.code).toBe('cross-site-request');
  });
});

describe('administration endpoints', () => {
  it('refuse people who are not administrators', async () => {
    const { client } = await signedIn();
    expect((await client.request('GET', '/api/admin/users')).status).toBe(403);
    expect((await new ApiClient().request('GET', '/api/admin/users')).status).toBe(401);
  });
});

describe('audit checkpoints over HTTP', () => {
  it('are exported to auditors as a file and hold when checked back', async () => {
    const { user, client } = await signedIn();
    await addMember((await makeInitiative('Checkpoint ward')).id, user.id, 'auditor');
    const exported = await client.request('GET', '/api/audit/checkpoint?download=1');
    expect(exported.status).toBe(200);
    expect(exported.headers.get('content-disposition')).toMatch(/^attachment; filename="crossgrain-audit-checkpoint-\d+\.json"$/);
    const checkpoint = await exported.json();
    expect(checkpoint).toMatchObject({ format: 'crossgrain-audit-checkpoint/1', position: expect.any(Number), hash: expect.stringMatching(/^[0-9a-f]{64}$/) });

    const checked = await client.request('POST', '/api/audit/verify', { checkpoint });
    expect(checked.status).toBe(200);
    const report = await checked.json();
    expect(report.checkpoint).toMatchObject({ position: checkpoint.position, holds: true });
    expect(report.intact).toBe(true);

    // Both the export and the check are in the trail, naming the checkpoint.
    const events = await ownerDb().query<{ action: string; details: Record<string, unknown> }>(
      "SELECT action, details FROM audit_events WHERE actor_id = :id AND action LIKE 'audit.%' ORDER BY chain_position",
      { replacements: { id: user.id }, type: QueryTypes.SELECT },
    );
    expect(events.map((e) => e.action)).toEqual(['audit.checkpoint-exported', 'audit.verified']);
    expect(events[0].details).toMatchObject({ position: checkpoint.position, hash: checkpoint.hash });
    expect(events[1].details).toMatchObject({ checkpointPosition: checkpoint.position, checkpointHolds: true });
  });

  it('refuse a malformed checkpoint with field messages, and people who are not auditors', async () => {
    const { user, client } = await signedIn();
    await addMember((await makeInitiative('Checkpoint ward 2')).id, user.id, 'auditor');
    const bad = await client.request('POST', '/api/audit/verify', { checkpoint: { format: 'crossgrain-audit-checkpoint/1', position: 0, hash: 'abc', eventAt: 'yesterday', takenAt: 'now' } });
    expect(bad.status).toBe(400);
    const paths = ((await bad.json()).error.details as { path: string }[]).map((d) => d.path).sort();
    expect(paths).toEqual(['checkpoint.eventAt', 'checkpoint.hash', 'checkpoint.position', 'checkpoint.takenAt']);

    const analyst = await signedIn();
    await addMember((await makeInitiative('Checkpoint ward 3')).id, analyst.user.id, 'analyst');
    expect((await analyst.client.request('GET', '/api/audit/checkpoint')).status).toBe(403);
    expect((await analyst.client.request('POST', '/api/audit/verify', {})).status).toBe(403);
  });
});
