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
import { z } from 'zod';
import { ROLES, type Role } from '../../../db/models';
import { env, isProduction } from './env';
import { readMemberships, readSession, requestPool, type PageRead, type PageTarget } from './requestReads';

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

const lucia = new Lucia(new NodePostgresAdapter(requestPool, { user: 'users', session: 'sessions' }), {
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

/** The memberships (with initiative names) of one user in initiatives that are not archived; none once deactivated. */
export async function loadMemberships(userId: string): Promise<MembershipInfo[]> {
  return MEMBERSHIP_ROWS.parse(await readMemberships(userId));
}

const MEMBERSHIP_ROWS = z.array(
  z.object({ initiativeId: z.string(), initiativeName: z.string(), initiativeSlug: z.string(), role: z.enum(ROLES) }),
);

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
 *
 * A cookie's session, its user and the user's memberships come in one round trip
 * (readSession). The session library's own validation would read them in three; its
 * expiry rule (expires_at) is applied here, beside the idle and absolute limits it does
 * not know. `pageTarget` names the counter of a page that may be kept; it comes back read in
 * the same round trip as `page` (only for a valid cookie session).
 */
export async function resolveSession(
  context: ResolveContext,
  options: { verifyBearer?: BearerVerifier; pageTarget?: PageTarget | null } = {},
): Promise<{ user: SessionUser | null; session: SessionInfo | null; page?: PageRead | null }> {
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
  const found = await readSession(sessionId, options.pageTarget ?? null);
  if (!found) {
    await endSession(context.cookies, undefined);
    return anonymous;
  }
  const { row, page } = found;
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
    await requestPool.query('UPDATE sessions SET last_seen_at = now() WHERE id = $1', [row.id]);
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
    page,
  };
}
