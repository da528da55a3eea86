/**
 * Sessions. The only module that knows the session library (lucia v3), so it can be
 * replaced without touching pages or endpoints.
 *
 * - The cookie carries a 160-bit random token; the database keeps only its SHA-256, which
 *   is the session id. A stolen copy of the sessions table cannot be replayed.
 * - A new session (new token) on every sign-in.
 * - Idle timeout and absolute lifetime are enforced here from `last_seen_at` and
 *   `created_at`; the library's own expiry is set to the absolute lifetime.
 * - Scripts may authenticate with a personal API token instead (`Authorization: Bearer`).
 */
import { createHash, randomBytes } from 'node:crypto';
import type { AstroCookies } from 'astro';
import { Lucia, TimeSpan } from 'lucia';
import { NodePostgresAdapter } from '@lucia-auth/adapter-postgresql';
import pg from 'pg';
import { z } from 'zod';
import { ROLES, type Role } from '../../../db/models';
import { env, isProduction } from './env';
import { logger } from './logger';

export interface MembershipInfo {
  initiativeId: string;
  initiativeName: string;
  initiativeSlug: string;
  role: Role;
}

export interface SessionUser {
  id: string;
  email: string;
  displayName: string;
  isAdmin: boolean;
  memberships: MembershipInfo[];
}

export interface SessionInfo {
  id: string;
  createdAt: Date;
  lastSeenAt: Date;
  /** How the request authenticated. */
  via: 'cookie' | 'api-token';
  /** The API token's id when `via` is `api-token`. */
  apiTokenId?: string;
}

/** The session cookie's name: `__Host-` in production pins it to this origin over HTTPS. */
export const SESSION_COOKIE = isProduction ? '__Host-crossgrain_session' : 'crossgrain_session';

const idleMs = () => env.CROSSGRAIN_SESSION_IDLE_MINUTES * 60_000;
const absoluteMs = () => env.CROSSGRAIN_SESSION_ABSOLUTE_HOURS * 3_600_000;
/** Writing last_seen_at on every request would cost a write per page; once a minute is enough. */
const LAST_SEEN_WRITE_INTERVAL_MS = 60_000;

/**
 * The session library's own pool, beside the app's Sequelize pool (src/lib/server/db.ts):
 * lucia's PostgreSQL adapter takes a pg Pool, and Sequelize's pool hands out bare clients.
 * It is small, and it also runs the two-statement membership read (loadMemberships), which
 * needs pg's simple query protocol.
 */
const pool = new pg.Pool({
  host: env.CROSSGRAIN_DB_HOST,
  port: env.CROSSGRAIN_DB_PORT,
  database: env.CROSSGRAIN_DB_NAME,
  user: env.CROSSGRAIN_DB_APP_USER,
  password: env.CROSSGRAIN_DB_APP_PASSWORD,
  max: 5,
});
// An idle client whose connection drops emits here; without a listener the process would exit.
pool.on('error', (error) => logger.error({ err: error }, 'session pool: idle connection lost'));

interface SessionRowAttributes {
  created_at: Date;
  last_seen_at: Date;
  client_address: string | null;
  user_agent: string | null;
}

interface UserRowAttributes {
  email: string;
  display_name: string;
  is_admin: boolean;
  status: string;
}

const lucia = new Lucia(new NodePostgresAdapter(pool, { user: 'users', session: 'sessions' }), {
  sessionExpiresIn: new TimeSpan(env.CROSSGRAIN_SESSION_ABSOLUTE_HOURS * 60, 'm'),
  sessionCookie: {
    name: SESSION_COOKIE,
    expires: false,
    attributes: { secure: isProduction, sameSite: 'lax', path: '/' },
  },
  getSessionAttributes: (attributes) => ({
    createdAt: new Date(attributes.created_at),
    lastSeenAt: new Date(attributes.last_seen_at),
  }),
  getUserAttributes: (attributes) => ({
    email: attributes.email,
    displayName: attributes.display_name,
    isAdmin: attributes.is_admin,
    status: attributes.status,
  }),
});

declare module 'lucia' {
  interface Register {
    Lucia: typeof lucia;
    DatabaseSessionAttributes: SessionRowAttributes;
    DatabaseUserAttributes: UserRowAttributes;
  }
}

/** SHA-256 of a secret token, hex. Tokens are only ever stored this way. */
export function hashToken(token: string): string {
  return createHash('sha256').update(token).digest('hex');
}

/** A new random secret: 20 bytes (160 bits), base64url. */
export function newToken(bytes = 20): string {
  return randomBytes(bytes).toString('base64url');
}

const UUID = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/;

/**
 * The memberships (with initiative names) of one user, read under their own identity.
 * Every request needs them, so they take one round trip: a simple-protocol query with two
 * statements, which PostgreSQL runs as one implicit transaction. The transaction-local
 * identity set by the first statement therefore holds for the second and ends with it
 * (an error rolls both back and leaves the pooled connection clean). The id is a uuid
 * read from the session row, checked again here before it is written into the text.
 */
export async function loadMemberships(userId: string): Promise<MembershipInfo[]> {
  // pg answers a multi-statement text with one result per statement, which its types do not say.
  const results: unknown = await pool.query(membershipsQuery(userId));
  if (!Array.isArray(results) || results.length !== 2) throw new Error('loadMemberships expected one result per statement');
  return MEMBERSHIP_ROWS.parse(results[1].rows);
}

/**
 * One read under a user's identity in one round trip, with the same two-statement text as
 * loadMemberships: for the checks that decide whether a kept page may be served
 * (pageCache.ts), where a whole transaction would cost more than the page. `statement` is
 * one SELECT whose values are uuids named `:name` (a `::` cast is left alone); each is checked as a uuid before it is
 * written into the text, and a value that is not one gives no rows.
 */
export async function readAsUser<T>(userId: string, statement: string, ids: Record<string, string>): Promise<T[]> {
  if (!UUID.test(userId)) throw new Error('readAsUser needs a user id');
  if (statement.includes(';')) throw new Error('readAsUser reads one statement');
  if (!Object.values(ids).every((id) => UUID.test(id))) return [];
  const text = statement.replace(/(?<!:):(\w+)/g, (_, name: string) => {
    if (!(name in ids)) throw new Error(`readAsUser has no value for :${name}`);
    return `'${ids[name]}'`;
  });
  const results: unknown = await pool.query(`SELECT set_config('app.user_id', '${userId}', true); ${text}`);
  if (!Array.isArray(results) || results.length !== 2) throw new Error('readAsUser expected one result per statement');
  return results[1].rows as T[];
}

const MEMBERSHIP_ROWS = z.array(
  z.object({ initiativeId: z.string(), initiativeName: z.string(), initiativeSlug: z.string(), role: z.enum(ROLES) }),
);

/** The two-statement text of loadMemberships (exported for its connection-hygiene test). */
export function membershipsQuery(userId: string): string {
  if (!UUID.test(userId)) throw new Error('loadMemberships needs a user id');
  return `SELECT set_config('app.user_id', '${userId}', true);
     SELECT m.initiative_id AS "initiativeId", i.name AS "initiativeName", i.slug AS "initiativeSlug", m.role
       FROM memberships m JOIN initiatives i ON i.id = m.initiative_id
      WHERE m.user_id = '${userId}' AND i.archived_at IS NULL
      ORDER BY i.name`;
}

/**
 * Starts a new session for a user and sets its cookie. Called after a successful
 * sign-in or invitation acceptance; any session token the browser held is replaced.
 */
export async function startSession(
  cookies: AstroCookies,
  userId: string,
  client: { address: string; userAgent: string | null },
): Promise<{ sessionId: string }> {
  const token = newToken();
  const sessionId = hashToken(token);
  const now = new Date();
  await lucia.createSession(
    userId,
    { created_at: now, last_seen_at: now, client_address: client.address, user_agent: client.userAgent?.slice(0, 300) ?? null },
    { sessionId },
  );
  const cookie = lucia.createSessionCookie(token);
  // The cookie lives no longer than the session's absolute lifetime.
  cookies.set(cookie.name, cookie.value, { ...cookie.attributes, maxAge: Math.floor(absoluteMs() / 1000) });
  return { sessionId };
}

/** Ends one session and clears the cookie. */
export async function endSession(cookies: AstroCookies, sessionId: string | undefined): Promise<void> {
  if (sessionId) await lucia.invalidateSession(sessionId);
  const blank = lucia.createBlankSessionCookie();
  cookies.set(blank.name, blank.value, blank.attributes);
}

/** Ends every session of a user (deactivation, password reset). */
export async function endAllSessions(userId: string): Promise<void> {
  await lucia.invalidateUserSessions(userId);
}

interface ResolveContext {
  cookies: AstroCookies;
  request: Request;
  url: URL;
  clientAddress: string;
}

/** Who a bearer token stands for; null when unknown or revoked. */
export type BearerVerifier = (
  token: string,
  use: { method: string; path: string; clientAddress: string },
) => Promise<{ user: SessionUser; session: SessionInfo } | null>;

/**
 * Works out who is asking: a session cookie, or a bearer token in the Authorization
 * header checked by `verifyBearer` (the middleware passes the personal API tokens'
 * verifier; without one a bearer token is anonymous). Expired, idle or deactivated
 * sessions are ended and give null.
 */
export async function resolveSession(
  context: ResolveContext,
  options: { verifyBearer?: BearerVerifier } = {},
): Promise<{ user: SessionUser | null; session: SessionInfo | null }> {
  const anonymous = { user: null, session: null };
  const authorization = context.request.headers.get('authorization');
  if (authorization?.startsWith('Bearer ')) {
    if (!options.verifyBearer) return anonymous;
    const resolved = await options.verifyBearer(authorization.slice('Bearer '.length).trim(), {
      method: context.request.method,
      path: context.url.pathname,
      clientAddress: context.clientAddress,
    });
    return resolved ?? anonymous;
  }
  const token = context.cookies.get(SESSION_COOKIE)?.value;
  if (!token) return anonymous;
  const sessionId = hashToken(token);
  const row = await loadSession(sessionId);
  if (!row) {
    await endSession(context.cookies, undefined);
    return anonymous;
  }
  const now = Date.now();
  const lastSeenAt = new Date(row.last_seen_at);
  const createdAt = new Date(row.created_at);
  const expired = now >= new Date(row.expires_at).getTime();
  const idle = now - lastSeenAt.getTime() > idleMs();
  const tooOld = now - createdAt.getTime() > absoluteMs();
  if (expired || idle || tooOld || row.status !== 'active') {
    await endSession(context.cookies, row.id);
    return anonymous;
  }
  if (now - lastSeenAt.getTime() > LAST_SEEN_WRITE_INTERVAL_MS) {
    await pool.query('UPDATE sessions SET last_seen_at = now() WHERE id = $1', [row.id]);
  }
  return {
    user: {
      id: row.user_id,
      email: row.email,
      displayName: row.display_name,
      isAdmin: row.is_admin,
      memberships: MEMBERSHIP_ROWS.parse(row.memberships),
    },
    session: { id: row.id, createdAt, lastSeenAt, via: 'cookie' },
  };
}

interface SessionRow {
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

const SESSION_ID = /^[0-9a-f]{64}$/;

/**
 * A session with its user and the user's memberships, in one round trip: every signed-in
 * request starts here, so it is one simple-protocol text of two statements, which
 * PostgreSQL runs as one implicit transaction (as loadMemberships). The first sets the
 * transaction-local identity to the session's user (empty when there is no such session),
 * so that row-level security shows the second its memberships; the identity ends with the
 * text. Sessions and users carry no row-level security (policies/rls/001_identity.sql).
 * The id is the SHA-256 of the cookie's token, checked as 64 hex digits before it is
 * written into the text.
 *
 * The session library's own validation would read the session and the user in two
 * queries and the memberships in a third; its expiry rule (expires_at) is applied here,
 * beside the idle and absolute limits it does not know.
 */
async function loadSession(sessionId: string): Promise<SessionRow | null> {
  const results: unknown = await pool.query(sessionQuery(sessionId));
  if (!Array.isArray(results) || results.length !== 2) throw new Error('loadSession expected one result per statement');
  return (results[1].rows[0] as SessionRow | undefined) ?? null;
}

/** The two-statement text of loadSession (exported for its connection-hygiene test). */
export function sessionQuery(sessionId: string): string {
  if (!SESSION_ID.test(sessionId)) throw new Error('loadSession needs a session id');
  return `SELECT set_config('app.user_id', coalesce((SELECT user_id::text FROM sessions WHERE id = '${sessionId}'), ''), true);
     SELECT s.id, s.user_id, s.expires_at, s.created_at, s.last_seen_at, u.email, u.display_name, u.is_admin, u.status,
            coalesce((SELECT json_agg(json_build_object('initiativeId', m.initiative_id, 'initiativeName', i.name,
                                                        'initiativeSlug', i.slug, 'role', m.role) ORDER BY i.name)
                        FROM memberships m JOIN initiatives i ON i.id = m.initiative_id
                       WHERE m.user_id = s.user_id AND i.archived_at IS NULL), '[]'::json) AS memberships
       FROM sessions s JOIN users u ON u.id = s.user_id
      WHERE s.id = '${sessionId}'`;
}
