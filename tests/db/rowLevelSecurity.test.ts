/**
 * Row-level security through the application's real connection pool (the `app` role),
 * against the throwaway cluster. Standard: PostgreSQL documentation, "Row Security
 * Policies"; our rules in shared design standards (RLS section).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { QueryTypes } from 'sequelize';
import { sequelize, withIdentity } from '@/lib/server/db';
import { env } from '@/lib/server/env';
import { addMember, closeOwnerDb, makeInitiative, makeUser, ownerDb } from '../support/factories';

/** Tables with no initiative data, read before an identity exists (documented in SECURITY.md). */
const TABLES_WITHOUT_INITIATIVE_DATA = new Set([
  'users', 'sessions', 'schema_migrations', 'auth_tokens', 'signin_attempts', 'api_tokens',
]);

afterAll(async () => {
  await closeOwnerDb();
});

describe('the application role', () => {
  it('is not a superuser, cannot bypass row-level security and owns nothing', async () => {
    const [role] = await ownerDb().query<{ rolsuper: boolean; rolbypassrls: boolean; owned: string }>(
      `SELECT r.rolsuper, r.rolbypassrls,
              (SELECT count(*) FROM pg_class c WHERE c.relowner = r.oid) +
              (SELECT count(*) FROM pg_proc p WHERE p.proowner = r.oid) +
              (SELECT count(*) FROM pg_namespace n WHERE n.nspowner = r.oid) AS owned
         FROM pg_roles r WHERE r.rolname = :name`,
      { replacements: { name: env.CROSSGRAIN_DB_APP_USER }, type: QueryTypes.SELECT },
    );
    expect(role).toBeDefined();
    expect(role.rolsuper).toBe(false);
    expect(role.rolbypassrls).toBe(false);
    expect(Number(role.owned)).toBe(0);
  });

  it('is the role the application pool connects as', async () => {
    const [row] = await sequelize.query<{ who: string }>('SELECT current_user AS who', { type: QueryTypes.SELECT });
    expect(row.who).toBe(env.CROSSGRAIN_DB_APP_USER);
  });
});

describe('every table that holds initiative data', () => {
  it('has row-level security enabled and forced, with at least one policy', async () => {
    const tables = await ownerDb().query<{ name: string; rls: boolean; forced: boolean; policies: string; hasInitiative: boolean }>(
      `SELECT c.relname AS name, c.relrowsecurity AS rls, c.relforcerowsecurity AS forced,
              (SELECT count(*) FROM pg_policy p WHERE p.polrelid = c.oid) AS policies,
              EXISTS (SELECT 1 FROM pg_attribute a WHERE a.attrelid = c.oid AND a.attname = 'initiative_id' AND NOT a.attisdropped) AS "hasInitiative"
         FROM pg_class c JOIN pg_namespace n ON n.oid = c.relnamespace
        WHERE n.nspname = 'public' AND c.relkind IN ('r', 'p')`,
      { type: QueryTypes.SELECT },
    );
    expect(tables.length).toBeGreaterThan(0);
    const unprotected = tables
      .filter((t) => !TABLES_WITHOUT_INITIATIVE_DATA.has(t.name))
      .filter((t) => !t.rls || !t.forced || Number(t.policies) === 0)
      .map((t) => t.name);
    expect(unprotected).toEqual([]);
    // A table that carries initiative_id can never be on the exemption list.
    const exemptWithInitiative = tables.filter((t) => t.hasInitiative && TABLES_WITHOUT_INITIATIVE_DATA.has(t.name));
    expect(exemptWithInitiative).toEqual([]);
  });
});

describe('initiatives under row-level security', () => {
  let alice: { id: string };
  let bob: { id: string };
  let northId: string;
  let southId: string;

  beforeAll(async () => {
    alice = await makeUser();
    bob = await makeUser();
    northId = (await makeInitiative('North ward pilot')).id;
    southId = (await makeInitiative('South ward pilot')).id;
    await addMember(northId, alice.id, 'analyst');
    await addMember(southId, bob.id, 'clinician');
  });

  const visibleIds = (userId: string | null) =>
    withIdentity(userId, async (transaction) => {
      const rows = await sequelize.query<{ id: string }>('SELECT id FROM initiatives', { type: QueryTypes.SELECT, transaction });
      return rows.map((r) => r.id);
    });

  it('shows nothing without an identity', async () => {
    expect(await visibleIds(null)).toEqual([]);
  });

  it('shows a member only the initiatives they belong to', async () => {
    expect(await visibleIds(alice.id)).toEqual([northId]);
    expect(await visibleIds(bob.id)).toEqual([southId]);
  });

  it('does not leak an identity to the next use of a pooled connection', async () => {
    await visibleIds(alice.id);
    // Outside any request transaction the setting reads back as '' and matches nobody.
    const rows = await sequelize.query<{ id: string }>('SELECT id FROM initiatives', { type: QueryTypes.SELECT });
    expect(rows).toEqual([]);
  });

  it('refuses a write that a policy does not allow (SQLSTATE 42501)', async () => {
    const attempt = withIdentity(alice.id, (transaction) =>
      sequelize.query("INSERT INTO initiatives (name, slug, organisation) VALUES ('x', 'rls-refused', 'y')", { transaction }),
    );
    await expect(attempt).rejects.toMatchObject({ original: { code: '42501' } });
  });

  it('hides a deactivated member even though the membership row remains', async () => {
    const carol = await makeUser();
    await addMember(northId, carol.id, 'auditor');
    expect(await visibleIds(carol.id)).toEqual([northId]);
    await ownerDb().query("UPDATE users SET status = 'deactivated' WHERE id = :id", { replacements: { id: carol.id } });
    expect(await visibleIds(carol.id)).toEqual([]);
  });
});

describe('the one-round-trip membership read of every request', () => {
  it('reads only the user’s memberships, and leaves no identity on the connection, even when it fails', async () => {
    const { default: pg } = await import('pg');
    const { loadMemberships, membershipsQuery } = await import('@/lib/server/session');
    const user = await makeUser();
    const mine = await makeInitiative();
    await makeInitiative();
    await addMember(mine.id, user.id, 'clinician');
    expect((await loadMemberships(user.id)).map((m) => [m.initiativeId, m.role])).toEqual([[mine.id, 'clinician']]);

    // One connection, used three times in a row as the pool would reuse it.
    const client = new pg.Client({
      host: env.CROSSGRAIN_DB_HOST, port: env.CROSSGRAIN_DB_PORT, database: env.CROSSGRAIN_DB_NAME,
      user: env.CROSSGRAIN_DB_APP_USER, password: env.CROSSGRAIN_DB_APP_PASSWORD,
    });
    await client.connect();
    try {
      await client.query(membershipsQuery(user.id));
      const after = await client.query("SELECT coalesce(current_setting('app.user_id', true), '') AS id, (SELECT count(*) FROM memberships) AS visible");
      expect(after.rows[0]).toEqual({ id: '', visible: '0' });
      // A failing second statement rolls the first back and leaves the connection usable.
      await expect(client.query(membershipsQuery(user.id).replace("ORDER BY i.name", "ORDER BY i.name, 1/0"))).rejects.toMatchObject({ code: '22012' });
      const clean = await client.query("SELECT coalesce(current_setting('app.user_id', true), '') AS id");
      expect(clean.rows[0].id).toBe('');
    } finally {
      await client.end();
    }
    expect(() => membershipsQuery("x'; DROP TABLE users; --")).toThrow(/user id/);
  });

  it('reads a session with its user and only that user’s memberships in one text, and leaves no identity behind', async () => {
    const { default: pg } = await import('pg');
    const { sessionQuery, hashToken, newToken } = await import('@/lib/server/session');
    const user = await makeUser();
    const mine = await makeInitiative();
    const theirs = await makeInitiative();
    await addMember(mine.id, user.id, 'analyst');
    await addMember(theirs.id, (await makeUser()).id, 'analyst');
    const sessionId = hashToken(newToken());
    await ownerDb().query(
      "INSERT INTO sessions (id, user_id, expires_at, created_at, last_seen_at) VALUES (:sessionId, :userId, now() + interval '1 hour', now(), now())",
      { replacements: { sessionId, userId: user.id } },
    );
    const client = new pg.Client({
      host: env.CROSSGRAIN_DB_HOST, port: env.CROSSGRAIN_DB_PORT, database: env.CROSSGRAIN_DB_NAME,
      user: env.CROSSGRAIN_DB_APP_USER, password: env.CROSSGRAIN_DB_APP_PASSWORD,
    });
    await client.connect();
    try {
      const results = (await client.query(sessionQuery(sessionId))) as unknown as { rows: Record<string, unknown>[] }[];
      expect(results).toHaveLength(2);
      const [row] = results[1].rows;
      expect(row).toMatchObject({ id: sessionId, user_id: user.id, status: 'active' });
      expect((row.memberships as { initiativeId: string; role: string }[]).map((m) => [m.initiativeId, m.role])).toEqual([[mine.id, 'analyst']]);
      const after = await client.query("SELECT coalesce(current_setting('app.user_id', true), '') AS id, (SELECT count(*) FROM memberships) AS visible");
      expect(after.rows[0]).toEqual({ id: '', visible: '0' });
      // An unknown session gives no row and sees no membership.
      const unknown = (await client.query(sessionQuery(hashToken(newToken())))) as unknown as { rows: unknown[] }[];
      expect(unknown[1].rows).toEqual([]);
    } finally {
      await client.end();
    }
    expect(() => sessionQuery("x'; DROP TABLE sessions; --")).toThrow(/session id/);
  });

  it('reads one statement under the user’s identity, with its uuids checked', async () => {
    const { readAsUser } = await import('@/lib/server/session');
    const user = await makeUser();
    const mine = await makeInitiative();
    const theirs = await makeInitiative();
    await addMember(mine.id, user.id, 'auditor');
    const read = (id: string) => readAsUser<{ id: string; named: string }>(user.id, 'SELECT i.id, i.id::text AS named FROM initiatives i WHERE i.id = :id', { id });
    expect(await read(mine.id)).toEqual([{ id: mine.id, named: mine.id }]);
    // Row-level security applies: another initiative's row is not there.
    expect(await read(theirs.id)).toEqual([]);
    // A value that is not a uuid is never written into the text; it gives no rows.
    expect(await read("x' OR true --")).toEqual([]);
    await expect(readAsUser(user.id, 'SELECT 1 WHERE :missing IS NULL', {})).rejects.toThrow(/no value for :missing/);
    await expect(readAsUser(user.id, 'SELECT 1; SELECT 2', {})).rejects.toThrow(/one statement/);
  });
});
