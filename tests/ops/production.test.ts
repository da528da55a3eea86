/**
 * Production mode: the built server started with CROSSGRAIN_ENV=production (on a port of
 * its own, against the test database) pins its session cookie to the origin with the
 * `__Host-` prefix and `Secure`, and sends HSTS on every response. The demo seed refuses
 * production, so the user comes from the test factories.
 */
import { spawn, type ChildProcess } from 'node:child_process';
import { createServer } from 'node:net';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { hashPassword } from '@/lib/server/passwords';
import { closeOwnerDb, makeUser } from '../support/factories';

const root = path.resolve(import.meta.dirname, '../..');
const password = 'harbour-lantern-sedge';
let server: ChildProcess;
let base: string;

/** A port nobody listens on just now. */
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

beforeAll(async () => {
  const port = await freePort();
  base = `http://127.0.0.1:${port}`;
  server = spawn(process.execPath, [path.join(root, 'scripts/serve.mjs')], {
    cwd: root,
    env: {
      ...process.env,
      CROSSGRAIN_ENV: 'production', HOST: '127.0.0.1', PORT: String(port), LOG_LEVEL: 'warn', CROSSGRAIN_PUBLIC_URL: base, CROSSGRAIN_APP_PROCESSES: '1',
      // Production refuses to fall back to the local default passwords: name them.
      CROSSGRAIN_DB_APP_PASSWORD: process.env.CROSSGRAIN_DB_APP_PASSWORD ?? 'crossgrain-app-local',
      CROSSGRAIN_DB_OWNER_PASSWORD: process.env.CROSSGRAIN_DB_OWNER_PASSWORD ?? 'crossgrain-owner-local',
    },
    stdio: 'ignore',
  });
  const until = Date.now() + 20_000;
  for (;;) {
    try {
      if ((await fetch(`${base}/api/health`)).ok) break;
    } catch {
      // not listening yet
    }
    if (Date.now() > until) throw new Error('The production-mode server did not become healthy');
    await new Promise((resolve) => setTimeout(resolve, 150));
  }
});

afterAll(async () => {
  if (server && server.exitCode === null) {
    const exited = new Promise((resolve) => server.once('exit', resolve));
    server.kill('SIGTERM');
    await exited;
  }
  await closeOwnerDb();
});

describe('production mode', () => {
  it('sets a __Host- session cookie marked Secure, and HSTS on every response', async () => {
    const user = await makeUser({ passwordHash: await hashPassword(password) });
    const signIn = await fetch(`${base}/api/auth/sign-in`, {
      method: 'POST', headers: { 'Content-Type': 'application/json' }, body: JSON.stringify({ email: user.email, password }),
    });
    expect(signIn.status).toBe(204);
    const cookies = signIn.headers.getSetCookie();
    expect(cookies.length).toBeGreaterThan(0);
    const session = cookies.find((line) => line.startsWith('__Host-crossgrain_session='));
    expect(session).toBeDefined();
    for (const line of cookies) {
      const attributes = line.split(';').slice(1).map((a) => a.trim().toLowerCase());
      expect(attributes).toContain('secure');
      expect(attributes).toContain('path=/');
      expect(attributes.some((a) => a.startsWith('domain='))).toBe(false); // __Host- forbids a Domain
    }
    expect(session?.toLowerCase()).toContain('httponly');

    const pair = session!.split(';')[0];
    const me = await fetch(`${base}/api/me`, { headers: { Cookie: pair } });
    expect(me.status).toBe(200);
    expect(((await me.json()) as { email: string }).email).toBe(user.email);

    for (const response of [signIn, me, await fetch(`${base}/sign-in`), await fetch(`${base}/api/health`)]) {
      expect(response.headers.get('strict-transport-security')).toBe('max-age=31536000; includeSubDomains');
    }
  });
});
