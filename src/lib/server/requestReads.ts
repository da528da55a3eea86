/**
 * The reads on every request's path, and the pool they use.
 *
 * Each is one PL/pgSQL function of policies/rls/019_request_reads.sql called as a prepared
 * statement: one round trip, a plan PostgreSQL keeps per connection, and row-level security
 * under the viewer's identity, which the function sets for its read and puts back. Sent as
 * text, the same reads were planned anew on every request, at about 1 ms of database CPU
 * each (`npm run bench -- results`).
 *
 * The pool also serves the session library (session.ts): its PostgreSQL adapter takes a pg
 * Pool, where Sequelize's pool (db.ts) hands out bare clients.
 */
import pg from 'pg';
import { env } from './env';
import { logger } from './logger';

export const requestPool = new pg.Pool({
  host: env.CROSSGRAIN_DB_HOST,
  port: env.CROSSGRAIN_DB_PORT,
  database: env.CROSSGRAIN_DB_NAME,
  user: env.CROSSGRAIN_DB_APP_USER,
  password: env.CROSSGRAIN_DB_APP_PASSWORD,
  max: 5,
});
// An idle client whose connection drops emits here; without a listener the process would exit.
requestPool.on('error', (error) => logger.error({ err: error }, 'request pool: idle connection lost'));

const UUID = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/;
const SESSION_ID = /^[0-9a-f]{64}$/;

/** One prepared call: its statement is prepared once per connection under `name`. */
async function call<T extends pg.QueryResultRow>(name: string, text: string, values: unknown[]): Promise<T[]> {
  return (await requestPool.query<T>({ name, text, values })).rows;
}

/** A session row with its user and the user's memberships (JSON), as app_read_session returns it. */
export interface SessionRow {
  id: string;
  user_id: string;
  expires_at: Date;
  created_at: Date;
  last_seen_at: Date;
  email: string;
  display_name: string;
  is_admin: boolean;
  status: string;
  memberships: unknown;
}

/** A session by its id (the SHA-256 of the cookie's token, 64 hex digits), or null. */
export async function readSession(sessionId: string): Promise<SessionRow | null> {
  if (!SESSION_ID.test(sessionId)) return null;
  const [row] = await call<SessionRow>('read_session', 'SELECT * FROM app_read_session($1)', [sessionId]);
  return row ?? null;
}

/** A user's memberships in initiatives that are not archived, read as that user; none for a deactivated user. */
export async function readMemberships(userId: string): Promise<{ initiativeId: string; initiativeName: string; initiativeSlug: string; role: string }[]> {
  if (!UUID.test(userId)) throw new Error('readMemberships needs a user id');
  return call('read_memberships', `SELECT initiative_id AS "initiativeId", initiative_name AS "initiativeName",
                                          initiative_slug AS "initiativeSlug", role
                                     FROM app_read_memberships($1)`, [userId]);
}

/**
 * A run as a viewer may see it: its initiative, its status and the initiative's counter
 * (initiativeStamp.ts; null only if the counter's row is missing). Null when there is no
 * such run or the viewer may not see it, and for an id that is not a uuid.
 */
export async function readRunStamp(userId: string, runId: string): Promise<{ initiativeId: string; status: string; stamp: string | null } | null> {
  if (!UUID.test(userId)) throw new Error('readRunStamp needs a user id');
  if (!UUID.test(runId)) return null;
  const [row] = await call<{ initiativeId: string; status: string; stamp: string | null }>(
    'read_run_stamp',
    'SELECT initiative_id AS "initiativeId", status, stamp::text AS stamp FROM app_read_run_stamp($1, $2)',
    [userId, runId],
  );
  return row ?? null;
}

/**
 * The counter of an initiative that is not archived, as a viewer may see it; null when
 * the viewer may not see it, it is archived, or the id is not a uuid.
 */
export async function readInitiativeStamp(userId: string, initiativeId: string): Promise<string | null> {
  if (!UUID.test(userId)) throw new Error('readInitiativeStamp needs a user id');
  if (!UUID.test(initiativeId)) return null;
  const [row] = await call<{ stamp: string | null }>('read_initiative_stamp', 'SELECT app_read_initiative_stamp($1, $2)::text AS stamp', [userId, initiativeId]);
  return row?.stamp ?? null;
}
