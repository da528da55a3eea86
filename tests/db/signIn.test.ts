/**
 * Sign-in rules at the feature level: argon2id parameters (OWASP password storage cheat
 * sheet minimum m = 19 MiB, t = 2, p = 1), throttling per account and per address, and
 * messages that never reveal whether an account exists (OWASP ASVS 5.0, shared design
 * standards, application security).
 */
import type { AstroCookies } from 'astro';
import { afterAll, describe, expect, it } from 'vitest';
import { QueryTypes } from 'sequelize';
import { SIGN_IN_REFUSED, signIn } from '@/features/auth/auth.server';
import { env } from '@/lib/server/env';
import { hashPassword } from '@/lib/server/passwords';
import { closeOwnerDb, makeUser, ownerDb } from '../support/factories';

afterAll(async () => {
  await closeOwnerDb();
});

/** Collects what signIn would set as cookies. */
function cookieJar() {
  const set: Record<string, string> = {};
  const cookies = { set: (name: string, value: string) => { set[name] = value; } } as unknown as AstroCookies;
  return { cookies, set };
}

const password = 'estuary-heron-lantern';
let addressCounter = 0;
/** A documentation-range address per test, so address counts never mix between tests. */
const newAddress = () => `192.0.2.${++addressCounter}`;

describe('stored password hashes', () => {
  it('are argon2id with at least m = 19456 KiB, t = 2, p = 1, read back from the stored string', async () => {
    const user = await makeUser({ passwordHash: await hashPassword(password) });
    const [row] = await ownerDb().query<{ password_hash: string }>('SELECT password_hash FROM users WHERE id = :id', {
      replacements: { id: user.id },
      type: QueryTypes.SELECT,
    });
    // PHC string format: $argon2id$v=19$m=<KiB>,t=<passes>,p=<lanes>$<salt>$<hash>
    const match = /^\$argon2id\$v=19\$m=(\d+),t=(\d+),p=(\d+)\$[A-Za-z0-9+/]+\$[A-Za-z0-9+/]+$/.exec(row.password_hash);
    expect(match).not.toBeNull();
    const [, memory, passes, lanes] = match!.map(Number);
    expect(memory).toBeGreaterThanOrEqual(19_456);
    expect(passes).toBeGreaterThanOrEqual(2);
    expect(lanes).toBeGreaterThanOrEqual(1);
  });
});

describe('signing in', () => {
  it('sets a new session token on every sign-in', async () => {
    const user = await makeUser({ passwordHash: await hashPassword(password) });
    const first = cookieJar();
    const second = cookieJar();
    await signIn(first.cookies, { email: user.email, password }, { address: newAddress(), userAgent: null });
    await signIn(second.cookies, { email: user.email, password }, { address: newAddress(), userAgent: null });
    const [a] = Object.values(first.set);
    const [b] = Object.values(second.set);
    expect(a).toMatch(/^[A-Za-z0-9_-]{27,}$/);
    expect(b).not.toBe(a);
  });

  it('gives one message for a wrong password, an unknown account and a deactivated one', async () => {
    const active = await makeUser({ passwordHash: await hashPassword(password) });
    const deactivated = await makeUser({ passwordHash: await hashPassword(password), status: 'deactivated' });
    const attempts = [
      { email: active.email, password: 'not-the-password-at-all' },
      { email: 'nobody-here@test.example', password },
      { email: deactivated.email, password },
    ];
    for (const credentials of attempts) {
      await expect(signIn(cookieJar().cookies, credentials, { address: newAddress(), userAgent: null })).rejects.toMatchObject({
        status: 401,
        code: 'sign-in-refused',
        message: SIGN_IN_REFUSED,
      });
    }
  });

  it('throttles an account after the configured number of failures, even with the right password', async () => {
    const user = await makeUser({ passwordHash: await hashPassword(password) });
    const limit = env.CROSSGRAIN_SIGNIN_MAX_FAILURES_ACCOUNT;
    for (let i = 0; i < limit; i += 1) {
      await expect(signIn(cookieJar().cookies, { email: user.email, password: 'wrong-password-again' }, { address: newAddress(), userAgent: null }))
        .rejects.toMatchObject({ status: 401 });
    }
    const blocked = signIn(cookieJar().cookies, { email: user.email, password }, { address: newAddress(), userAgent: null });
    await expect(blocked).rejects.toMatchObject({ status: 429, code: 'too-many-requests' });
  });

  it('throttles an unknown account exactly like a known one', async () => {
    const limit = env.CROSSGRAIN_SIGNIN_MAX_FAILURES_ACCOUNT;
    for (let i = 0; i < limit; i += 1) {
      await expect(signIn(cookieJar().cookies, { email: 'ghost@test.example', password: 'x' }, { address: newAddress(), userAgent: null }))
        .rejects.toMatchObject({ status: 401 });
    }
    await expect(signIn(cookieJar().cookies, { email: 'ghost@test.example', password: 'x' }, { address: newAddress(), userAgent: null }))
      .rejects.toMatchObject({ status: 429 });
  });

  it('throttles a client address that fails across many accounts', async () => {
    const address = newAddress();
    const limit = env.CROSSGRAIN_SIGNIN_MAX_FAILURES_ADDRESS;
    for (let i = 0; i < limit; i += 1) {
      await expect(signIn(cookieJar().cookies, { email: `spray-${i}@test.example`, password: 'x' }, { address, userAgent: null }))
        .rejects.toMatchObject({ status: 401 });
    }
    const user = await makeUser({ passwordHash: await hashPassword(password) });
    await expect(signIn(cookieJar().cookies, { email: user.email, password }, { address, userAgent: null })).rejects.toMatchObject({ status: 429 });
    // The same account from another address is not blocked.
    await expect(signIn(cookieJar().cookies, { email: user.email, password }, { address: newAddress(), userAgent: null })).resolves.toMatchObject({ userId: user.id });
  });

  it('records successes and failures in the audit trail', async () => {
    const user = await makeUser({ passwordHash: await hashPassword(password) });
    const address = newAddress();
    await expect(signIn(cookieJar().cookies, { email: user.email, password: 'wrong-password-x' }, { address, userAgent: null })).rejects.toThrow();
    await signIn(cookieJar().cookies, { email: user.email, password }, { address, userAgent: null });
    const events = await ownerDb().query<{ action: string; actor_id: string | null; subject_id: string | null }>(
      'SELECT action, actor_id, subject_id FROM audit_events WHERE client_address = :address ORDER BY chain_position',
      { replacements: { address }, type: QueryTypes.SELECT },
    );
    expect(events.map((e) => e.action)).toEqual(['auth.sign-in-failed', 'auth.sign-in']);
    expect(events[0]).toMatchObject({ actor_id: null, subject_id: user.id });
    expect(events[1]).toMatchObject({ actor_id: user.id });
  });
});
