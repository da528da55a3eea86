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

describe('the reads of every request (policies/rls/019_request_reads.sql)', () => {
  const connect = async () => {
    const { default: pg } = await import('pg');
    const client = new pg.Client({
      host: env.CROSSGRAIN_DB_HOST, port: env.CROSSGRAIN_DB_PORT, database: env.CROSSGRAIN_DB_NAME,
      user: env.CROSSGRAIN_DB_APP_USER, password: env.CROSSGRAIN_DB_APP_PASSWORD,
    });
    await client.connect();
    return client;
  };
  const identityAndVisible = "SELECT coalesce(current_setting('app.user_id', true), '') AS id, (SELECT count(*) FROM memberships) AS visible";

  it('reads only the user’s memberships, none once they are deactivated, and puts the identity back as it was', async () => {
    const { loadMemberships } = await import('@/lib/server/session');
    const user = await makeUser();
    const other = await makeUser();
    const mine = await makeInitiative();
    const theirs = await makeInitiative();
    const archived = await makeInitiative();
    await addMember(mine.id, user.id, 'clinician');
    await addMember(theirs.id, other.id, 'analyst');
    await addMember(archived.id, user.id, 'analyst');
    await ownerDb().query('UPDATE initiatives SET archived_at = now() WHERE id = :id', { replacements: { id: archived.id } });
    expect((await loadMemberships(user.id)).map((m) => [m.initiativeId, m.role])).toEqual([[mine.id, 'clinician']]);

    const client = await connect();
    try {
      // Alone, it leaves no identity on the pooled connection.
      await client.query('SELECT * FROM app_read_memberships($1)', [user.id]);
      expect((await client.query(identityAndVisible)).rows[0]).toEqual({ id: '', visible: '0' });
      // Inside a transaction of another identity, that identity holds again after the read.
      await client.query('BEGIN');
      await client.query("SELECT set_config('app.user_id', $1, true)", [other.id]);
      const read = await client.query('SELECT initiative_id FROM app_read_memberships($1)', [user.id]);
      expect(read.rows).toEqual([{ initiative_id: mine.id }]);
      expect((await client.query(identityAndVisible)).rows[0]).toEqual({ id: other.id, visible: '1' });
      await client.query('COMMIT');
      // A value that is not a uuid fails before anything is read, and the connection stays clean.
      await expect(client.query('SELECT * FROM app_read_memberships($1)', ["x' OR true --"])).rejects.toMatchObject({ code: '22P02' });
      expect((await client.query(identityAndVisible)).rows[0]).toEqual({ id: '', visible: '0' });
    } finally {
      await client.end();
    }
    // An administrator's own memberships only, though the policies show them every initiative.
    const admin = await makeUser({ isAdmin: true });
    await addMember(theirs.id, admin.id, 'auditor');
    expect((await loadMemberships(admin.id)).map((m) => [m.initiativeId, m.role])).toEqual([[theirs.id, 'auditor']]);
    await ownerDb().query("UPDATE users SET status = 'deactivated' WHERE id = :id", { replacements: { id: user.id } });
    expect(await loadMemberships(user.id)).toEqual([]);
    await expect(loadMemberships("x'; DROP TABLE users; --")).rejects.toThrow(/user id/);
  });

  it('reads a session with its user and only that user’s memberships, and leaves no identity behind', async () => {
    const { hashToken, newToken } = await import('@/lib/server/session');
    const { readSession } = await import('@/lib/server/requestReads');
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
    const row = (await readSession(sessionId))?.row;
    expect(row).toMatchObject({ id: sessionId, user_id: user.id, status: 'active', email: user.email });
    expect((row!.memberships as { initiativeId: string; role: string }[]).map((m) => [m.initiativeId, m.role])).toEqual([[mine.id, 'analyst']]);
    // An unknown session, and a value that is not a session id, give no row.
    expect(await readSession(hashToken(newToken()))).toBeNull();
    expect(await readSession("x' OR true --")).toBeNull();

    const client = await connect();
    try {
      const direct = await client.query('SELECT id, memberships FROM app_read_session($1)', [sessionId]);
      expect(direct.rows).toHaveLength(1);
      expect((await client.query(identityAndVisible)).rows[0]).toEqual({ id: '', visible: '0' });
    } finally {
      await client.end();
    }
    // A deactivated user's session still reads (so that it can be ended), with no memberships.
    await ownerDb().query("UPDATE users SET status = 'deactivated' WHERE id = :id", { replacements: { id: user.id } });
    expect((await readSession(sessionId))?.row).toMatchObject({ status: 'deactivated', memberships: [] });
  });

  it('reads an initiative’s counter only for its members, for each caller in turn on one connection', async () => {
    const { readInitiativeStamp } = await import('@/lib/server/requestReads');
    const member = await makeUser();
    const outsider = await makeUser();
    const initiative = await makeInitiative();
    await addMember(initiative.id, member.id, 'auditor');
    const [{ stamp }] = await ownerDb().query<{ stamp: string }>('SELECT stamp::text AS stamp FROM initiative_stamps WHERE initiative_id = :id', { replacements: { id: initiative.id }, type: QueryTypes.SELECT });
    expect(await readInitiativeStamp(member.id, initiative.id)).toBe(stamp);
    expect(await readInitiativeStamp(outsider.id, initiative.id)).toBeNull();
    expect(await readInitiativeStamp(member.id, 'not-a-uuid')).toBeNull();

    // PostgreSQL keeps a generic plan after five calls on a connection; the identity must still count on every call.
    const client = await connect();
    try {
      for (let i = 0; i < 8; i += 1) {
        const seen = await client.query('SELECT app_read_initiative_stamp($1, $2)::text AS member, app_read_initiative_stamp($3, $2)::text AS outsider', [member.id, initiative.id, outsider.id]);
        expect(seen.rows[0]).toEqual({ member: stamp, outsider: null });
      }
    } finally {
      await client.end();
    }

    // Read along with a session, for the session's user: the same answer, and it stands in for the read only for that initiative and user.
    const { hashToken, newToken } = await import('@/lib/server/session');
    const { readSession } = await import('@/lib/server/requestReads');
    const sessionOf = async (userId: string) => {
      const sessionId = hashToken(newToken());
      await ownerDb().query(
        "INSERT INTO sessions (id, user_id, expires_at, created_at, last_seen_at) VALUES (:sessionId, :userId, now() + interval '1 hour', now(), now())",
        { replacements: { sessionId, userId } },
      );
      return sessionId;
    };
    const target = { kind: 'initiative', id: initiative.id } as const;
    const along = (await readSession(await sessionOf(member.id), target))?.page ?? null;
    expect(along).toEqual({ kind: 'initiative', id: initiative.id, userId: member.id, stamp });
    expect((await readSession(await sessionOf(outsider.id), target))?.page).toEqual({ kind: 'initiative', id: initiative.id, userId: outsider.id, stamp: null });
    expect(await readInitiativeStamp(member.id, initiative.id, along)).toBe(stamp);
    await ownerDb().query('UPDATE initiatives SET archived_at = now() WHERE id = :id', { replacements: { id: initiative.id } });
    // What came along answers for its own initiative and user only; anything else is read again.
    expect(await readInitiativeStamp(outsider.id, initiative.id, along)).toBeNull();
    expect(await readInitiativeStamp(member.id, initiative.id)).toBeNull();
    expect((await readSession(await sessionOf(member.id), target))?.page).toMatchObject({ stamp: null });
  });
});
