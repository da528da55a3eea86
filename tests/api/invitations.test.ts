/**
 * Invitations after they are sent, over HTTP against the built server: an administrator
 * sends a new link (the old one stops working) or revokes the invitation (its link stops
 * working and the person stays listed as a revoked invitation); each is audited.
 */
import { readdirSync, readFileSync } from 'node:fs';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { QueryTypes } from 'sequelize';
import { hashPassword } from '@/lib/server/passwords';
import { mailDir, startServer, type ServerHandle } from '../browser/harness';
import { closeOwnerDb, makeUser, ownerDb } from '../support/factories';
import { ApiClient } from '../support/http';

const password = 'lantern-estuary-heron';
let server: ServerHandle;
let admin: ApiClient;

beforeAll(async () => {
  server = await startServer();
  const user = await makeUser({ passwordHash: await hashPassword(password), isAdmin: true });
  admin = new ApiClient();
  expect((await admin.signIn(user.email, password)).status).toBe(204);
});

afterAll(async () => {
  await server?.close();
  await closeOwnerDb();
});

/** Every invitation token the local mail server kept for an address, once there are at least `count`. */
async function invitationTokens(email: string, count: number): Promise<string[]> {
  for (let attempt = 0; attempt < 50; attempt += 1) {
    const tokens: string[] = [];
    for (const file of readdirSync(mailDir).filter((f) => f.endsWith('.json'))) {
      const summary = JSON.parse(readFileSync(path.join(mailDir, file), 'utf8')) as { id: string; to: string[] | string; subject: string };
      const to = Array.isArray(summary.to) ? summary.to : [summary.to];
      if (!to.some((t) => t.includes(email)) || !/invited/i.test(summary.subject)) continue;
      const eml = readFileSync(path.join(mailDir, `${summary.id}.eml`), 'utf8').replace(/=\r?\n/g, '').replace(/=3D/g, '=');
      const token = /invitation\?token=([A-Za-z0-9_%-]+)/.exec(eml)?.[1];
      if (token) tokens.push(decodeURIComponent(token));
    }
    if (tokens.length >= count) return [...new Set(tokens)];
    await new Promise((resolve) => setTimeout(resolve, 100));
  }
  throw new Error(`fewer than ${count} invitation messages for ${email}`);
}

async function invite(name: string): Promise<{ userId: string; email: string }> {
  const email = `${name}-${Date.now()}@test.example`;
  const response = await admin.request('POST', '/api/admin/users', { email, displayName: name, isAdmin: false });
  expect(response.status).toBe(201);
  const { userId } = (await response.json()) as { userId: string };
  return { userId, email };
}

const accept = (token: string) => new ApiClient().request('POST', '/api/auth/accept-invitation', { token, password: 'reed-warbler-estuary' });

async function actionsFor(userId: string): Promise<string[]> {
  const rows = await ownerDb().query<{ action: string }>(
    "SELECT action FROM audit_events WHERE subject_id = :id AND action LIKE 'auth.invitation%' ORDER BY chain_position",
    { replacements: { id: userId }, type: QueryTypes.SELECT },
  );
  return rows.map((r) => r.action);
}

describe('resending an invitation', () => {
  it('mails a new link that works, and the old link no longer does', async () => {
    const { userId, email } = await invite('resent');
    const [first] = await invitationTokens(email, 1);
    const resent = await admin.request('POST', `/api/admin/users/${userId}/invitation`);
    expect(resent.status).toBe(200);
    expect(await resent.json()).toEqual({ userId, mailed: true });
    const second = (await invitationTokens(email, 2)).find((t) => t !== first)!;
    expect(second).toBeDefined();

    const old = await accept(first);
    expect(old.status).toBe(422);
    expect((await old.json()).error.message).toMatch(/already been used|not valid/);
    expect((await accept(second)).status).toBe(204);
    expect(await actionsFor(userId)).toEqual(['auth.invitation-sent', 'auth.invitation-resent', 'auth.invitation-accepted']);

    // Accepted now: there is no invitation left to resend or revoke.
    expect((await admin.request('POST', `/api/admin/users/${userId}/invitation`)).status).toBe(409);
    expect((await admin.request('DELETE', `/api/admin/users/${userId}/invitation`)).status).toBe(409);
  });
});

describe('revoking an invitation', () => {
  it('stops the link, keeps the person listed as a revoked invitation, and can be undone by a new link', async () => {
    const { userId, email } = await invite('revoked');
    const [token] = await invitationTokens(email, 1);
    expect((await admin.request('DELETE', `/api/admin/users/${userId}/invitation`)).status).toBe(204);
    expect((await accept(token)).status).toBe(422);
    expect((await admin.request('DELETE', `/api/admin/users/${userId}/invitation`)).status).toBe(409);

    const people = (await (await admin.request('GET', '/api/admin/users')).json()) as { id: string; status: string; activated: boolean }[];
    expect(people.find((p) => p.id === userId)).toMatchObject({ status: 'deactivated', activated: false });

    expect((await admin.request('POST', `/api/admin/users/${userId}/invitation`)).status).toBe(200);
    const fresh = (await invitationTokens(email, 2)).find((t) => t !== token)!;
    expect((await accept(fresh)).status).toBe(204);
    expect(await actionsFor(userId)).toEqual(['auth.invitation-sent', 'auth.invitation-revoked', 'auth.invitation-resent', 'auth.invitation-accepted']);
  });

  it('is for administrators only', async () => {
    const { userId } = await invite('guarded');
    const user = await makeUser({ passwordHash: await hashPassword(password) });
    const other = new ApiClient();
    await other.signIn(user.email, password);
    expect((await other.request('DELETE', `/api/admin/users/${userId}/invitation`)).status).toBe(403);
    expect((await other.request('POST', `/api/admin/users/${userId}/invitation`)).status).toBe(403);
    expect(await actionsFor(userId)).toEqual(['auth.invitation-sent']);
  });
});
