/**
 * The reads on every request's path, and the pool they use.
 *
 * Each is one PL/pgSQL function of policies/rls/019_request_reads.sql called as a prepared
 * statement: one round trip and a plan PostgreSQL keeps per connection. Initiative data (a
 * run, a counter) is read under row-level security as the viewer, whose identity the
 * function sets for its read and puts back; a session and the user's own memberships are
 * read by the rule the policies apply to them, written out (see the SQL file). Sent as text,
 * the same reads were planned anew on every request, at about 1 ms of database CPU each
 * (`npm run bench -- results`).
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

/**
 * The counter a page that may be kept needs (pageCache.ts), named by the page's path: a
 * run's (its results page, and its plot data) or an initiative's (its review board). A
 * signed-in request for such a page reads it in the same round trip as its session
 * (readSession), under the session's user.
 */
export type PageTarget = { kind: 'run'; id: string } | { kind: 'initiative'; id: string };

/** A counter read along with the session: for a run, what readRunStamp gives; for an initiative, what readInitiativeStamp gives. */
export type PageRead =
  | { kind: 'run'; id: string; userId: string; run: RunStamp | null }
  | { kind: 'initiative'; id: string; userId: string; stamp: string | null };

/** A run's initiative and status, and the initiative's counter, as its viewer may see them. */
export interface RunStamp {
  initiativeId: string;
  status: string;
  /** Null only if the counter's row is missing. */
  stamp: string | null;
}

const RUN_PATHS = /^\/(?:runs\/([0-9a-fA-F-]{36})|api\/runs\/([0-9a-fA-F-]{36})\/plot-data)\/?$/;
const BOARD_PATH = /^\/initiatives\/([0-9a-fA-F-]{36})\/board\/?$/;

/**
 * What the session's read brings along for a request to `pathname`, or null: the run of a
 * results page and of its plot data, the initiative of a review board. Whatever does not
 * come along is read where it is needed, in a round trip of its own.
 */
export function readAlongTarget(pathname: string): PageTarget | null {
  const run = RUN_PATHS.exec(pathname);
  if (run) return { kind: 'run', id: (run[1] ?? run[2]).toLowerCase() };
  const board = BOARD_PATH.exec(pathname);
  if (board) return { kind: 'initiative', id: board[1].toLowerCase() };
  return null;
}

type SessionWithPage = SessionRow & { page_initiative_id?: string | null; page_status?: string | null; page_stamp?: string | null };

/** The session's read as a prepared statement: alone, or with a run's or an initiative's counter. */
const SESSION_READS = {
  alone: { name: 'read_session', text: 'SELECT * FROM app_read_session($1)' },
  run: {
    name: 'read_session_and_run',
    text: `SELECT s.*, r.initiative_id AS page_initiative_id, r.status AS page_status, r.stamp::text AS page_stamp
             FROM app_read_session($1) s LEFT JOIN LATERAL app_read_run_stamp(s.user_id, $2) r ON true`,
  },
  initiative: {
    name: 'read_session_and_initiative',
    text: 'SELECT s.*, app_read_initiative_stamp(s.user_id, $2)::text AS page_stamp FROM app_read_session($1) s',
  },
} as const;

/**
 * A session by its id (the SHA-256 of the cookie's token, 64 hex digits), or null; with a
 * page's counter read in the same round trip when `target` names one (see PageTarget).
 */
export async function readSession(sessionId: string, target: PageTarget | null = null): Promise<{ row: SessionRow; page: PageRead | null } | null> {
  if (!SESSION_ID.test(sessionId)) return null;
  if (target && !UUID.test(target.id)) target = null;
  const read = SESSION_READS[target?.kind ?? 'alone'];
  const [found] = await call<SessionWithPage>(read.name, read.text, target ? [sessionId, target.id] : [sessionId]);
  if (found === undefined) return null;
  const { page_initiative_id: initiativeId, page_status: status, page_stamp: stamp, ...row } = found;
  if (target === null) return { row, page: null };
  const page: PageRead = target.kind === 'run'
    ? { kind: 'run', id: target.id, userId: row.user_id, run: initiativeId && status ? { initiativeId, status, stamp: stamp ?? null } : null }
    : { kind: 'initiative', id: target.id, userId: row.user_id, stamp: stamp ?? null };
  return { row, page };
}

/** A user's own memberships in initiatives that are not archived, by name; none for a deactivated user. */
export async function readMemberships(userId: string): Promise<{ initiativeId: string; initiativeName: string; initiativeSlug: string; role: string }[]> {
  if (!UUID.test(userId)) throw new Error('readMemberships needs a user id');
  return call('read_memberships', `SELECT initiative_id AS "initiativeId", initiative_name AS "initiativeName",
                                          initiative_slug AS "initiativeSlug", role
                                     FROM app_read_memberships($1)`, [userId]);
}

/**
 * A run as a viewer may see it: its initiative, its status and the initiative's counter
 * (initiativeStamp.ts). Null when there is no such run or the viewer may not see it, and for
 * an id that is not a uuid. `along` is what the session's read brought for this request:
 * when it is this run's, for this viewer, it is the answer and no read is made.
 */
export async function readRunStamp(userId: string, runId: string, along: PageRead | null = null): Promise<RunStamp | null> {
  if (along?.kind === 'run' && along.id === runId && along.userId === userId) return along.run;
  if (!UUID.test(userId)) throw new Error('readRunStamp needs a user id');
  if (!UUID.test(runId)) return null;
  const [row] = await call<RunStamp>(
    'read_run_stamp',
    'SELECT initiative_id AS "initiativeId", status, stamp::text AS stamp FROM app_read_run_stamp($1, $2)',
    [userId, runId],
  );
  return row ?? null;
}

/**
 * The counter of an initiative that is not archived, as a viewer may see it; null when
 * the viewer may not see it, it is archived, or the id is not a uuid. `along` as for
 * readRunStamp.
 */
export async function readInitiativeStamp(userId: string, initiativeId: string, along: PageRead | null = null): Promise<string | null> {
  if (along?.kind === 'initiative' && along.id === initiativeId && along.userId === userId) return along.stamp;
  if (!UUID.test(userId)) throw new Error('readInitiativeStamp needs a user id');
  if (!UUID.test(initiativeId)) return null;
  const [row] = await call<{ stamp: string | null }>('read_initiative_stamp', 'SELECT app_read_initiative_stamp($1, $2)::text AS stamp', [userId, initiativeId]);
  return row?.stamp ?? null;
}
