/**
 * Signing in and out, password resets and invitation acceptance. Messages never reveal
 * whether an account exists; every outcome is an audit event.
 */
import type { AstroCookies } from 'astro';
import { QueryTypes, fn, type Transaction } from 'sequelize';
import { AuthToken, User } from '../../../db/models';
import { actAs, sequelize, withIdentity } from '@/lib/server/db';
import { publicUrl } from '@/lib/server/env';
import { AppError, tooManyRequests, unprocessable } from '@/lib/server/errors';
import { logger } from '@/lib/server/logger';
import { renderEmail, sendMail } from '@/lib/server/mail';
import { hashPassword, verifyPassword } from '@/lib/server/passwords';
import { endAllSessions, endSession, hashToken, newToken, startSession } from '@/lib/server/session';
import { recordAudit } from '../audit/audit.server';
import { revokeAllApiTokens } from './apiTokens.server';
import { passwordProblem } from './passwordPolicy';
import { recordAttempt, recordResetRequest, resetRequestState, throttleState } from './throttle.server';

export interface ClientInfo {
  address: string;
  userAgent: string | null;
}

/** One message for every refused sign-in, so that nobody learns which accounts exist. */
export const SIGN_IN_REFUSED = 'That e-mail address and password do not match an active account.';

/** A hash to verify against when the account does not exist, so both paths take as long. */
let decoyHash: Promise<string> | null = null;
const decoy = () => (decoyHash ??= hashPassword(newToken()));

interface UserRow {
  id: string;
  email: string;
  passwordHash: string | null;
  status: string;
}

async function findUserByEmail(transaction: Transaction, email: string): Promise<UserRow | null> {
  return User.findOne({
    attributes: ['id', 'email', 'passwordHash', 'status'],
    where: { email: email.toLowerCase() },
    raw: true,
    transaction,
  });
}

/**
 * Checks an e-mail and password and starts a new session (a new token, whatever cookie
 * the browser held). Refusals are counted per account and per address; past the limit
 * the answer is 429 with Retry-After, before the password is even checked.
 */
export async function signIn(
  cookies: AstroCookies,
  credentials: { email: string; password: string },
  client: ClientInfo,
): Promise<{ userId: string }> {
  const email = credentials.email.trim().toLowerCase();
  const outcome = await withIdentity(null, async (transaction) => {
    const throttle = await throttleState(transaction, email, client.address);
    if (throttle.blocked) {
      await recordAudit(transaction, {
        action: 'auth.sign-in-failed',
        actorId: null,
        clientAddress: client.address,
        details: { reason: 'throttled' },
      });
      return { kind: 'throttled' as const, retryAfter: throttle.retryAfterSeconds };
    }
    const user = await findUserByEmail(transaction, email);
    const hash = user?.passwordHash ?? (await decoy());
    const matches = await verifyPassword(hash, credentials.password);
    const ok = Boolean(user && user.passwordHash && matches && user.status === 'active');
    await recordAttempt(transaction, email, client.address, ok);
    if (!ok || !user) {
      await recordAudit(transaction, {
        action: 'auth.sign-in-failed',
        actorId: null,
        subjectType: user ? 'user' : undefined,
        subjectId: user?.id,
        clientAddress: client.address,
        details: { reason: !user ? 'unknown-account' : user.status !== 'active' ? `account-${user.status}` : 'wrong-password' },
      });
      return { kind: 'refused' as const };
    }
    return { kind: 'ok' as const, userId: user.id };
  });
  if (outcome.kind === 'throttled') {
    const minutes = Math.ceil(outcome.retryAfter / 60);
    throw tooManyRequests(`Too many sign-in attempts. Wait ${minutes} minute${minutes === 1 ? '' : 's'} and try again.`, outcome.retryAfter);
  }
  if (outcome.kind === 'refused') throw new AppError(401, 'sign-in-refused', SIGN_IN_REFUSED);

  const { sessionId } = await startSession(cookies, outcome.userId, client);
  await withIdentity(outcome.userId, async (transaction) => {
    await User.update({ lastSignInAt: fn('now') }, { where: { id: outcome.userId }, silent: true, transaction });
    await recordAudit(transaction, {
      action: 'auth.sign-in',
      actorId: outcome.userId,
      subjectType: 'session',
      subjectId: sessionId.slice(0, 12),
      clientAddress: client.address,
    });
  });
  return { userId: outcome.userId };
}

/** Ends the current session and records it. */
export async function signOut(
  cookies: AstroCookies,
  current: { userId: string; sessionId: string } | null,
  client: ClientInfo,
): Promise<void> {
  await endSession(cookies, current?.sessionId);
  if (!current) return;
  await withIdentity(current.userId, (transaction) =>
    recordAudit(transaction, {
      action: 'auth.sign-out',
      actorId: current.userId,
      subjectType: 'session',
      subjectId: current.sessionId.slice(0, 12),
      clientAddress: client.address,
    }),
  );
}

type TokenPurpose = 'invitation' | 'password-reset';
const TOKEN_LIFETIME_MS: Record<TokenPurpose, number> = {
  invitation: 7 * 24 * 3_600_000,
  'password-reset': 3_600_000,
};

/** Creates a single-use token for a user; returns the secret (only its hash is stored). */
export async function issueToken(
  transaction: Transaction,
  userId: string,
  purpose: TokenPurpose,
  createdBy: string | null,
): Promise<string> {
  const token = newToken(24);
  // A new link replaces any unused one of the same kind.
  await AuthToken.update({ usedAt: fn('now') }, { where: { userId, purpose, usedAt: null }, transaction });
  await AuthToken.create(
    { userId, purpose, tokenHash: hashToken(token), expiresAt: new Date(Date.now() + TOKEN_LIFETIME_MS[purpose]), createdBy },
    { transaction },
  );
  return token;
}

interface TokenRow extends UserRow {
  token_id: string;
  expires_at: Date;
  used_at: Date | null;
}

/**
 * Finds a single-use token and says why it cannot be used, if it cannot: one rule for
 * showing the set-password form and for using the link. `lock` holds the row until the
 * transaction ends, so a link is never used twice at once.
 */
async function findToken(
  transaction: Transaction,
  token: string,
  purpose: TokenPurpose,
  lock: boolean,
): Promise<{ row: TokenRow; problem: null } | { row: null; problem: { code: string; message: string } }> {
  // A join locked on one side only (FOR UPDATE OF t): raw SQL.
  const [row] = await sequelize.query<TokenRow>(
    `SELECT t.id AS token_id, t.expires_at, t.used_at, u.id, u.email, u.password_hash AS "passwordHash", u.status
       FROM auth_tokens t JOIN users u ON u.id = t.user_id
      WHERE t.token_hash = :hash AND t.purpose = :purpose${lock ? ' FOR UPDATE OF t' : ''}`,
    { replacements: { hash: hashToken(token), purpose }, type: QueryTypes.SELECT, transaction },
  );
  const label = purpose === 'invitation' ? 'invitation' : 'password-reset';
  const refuse = (code: string, message: string) => ({ row: null, problem: { code, message } });
  if (!row || row.status === 'deactivated') return refuse('link-invalid', `This ${label} link is not valid. Ask for a new one.`);
  if (row.used_at) return refuse('link-used', `This ${label} link has already been used. Ask for a new one.`);
  if (new Date(row.expires_at).getTime() < Date.now()) return refuse('link-expired', `This ${label} link has expired. Ask for a new one.`);
  return { row, problem: null };
}

/** Marks a token used and returns its user, or throws a clear 422 when it cannot be used. */
async function consumeToken(transaction: Transaction, token: string, purpose: TokenPurpose): Promise<UserRow> {
  const found = await findToken(transaction, token, purpose, true);
  if (found.problem) throw unprocessable(found.problem.code, found.problem.message);
  await AuthToken.update({ usedAt: fn('now') }, { where: { id: found.row.token_id }, transaction });
  return found.row;
}

/** Checks a token without using it (to show the set-password form or a clear error). */
export async function checkToken(token: string, purpose: TokenPurpose): Promise<{ email: string } | { problem: string }> {
  return withIdentity(null, async (transaction) => {
    const found = await findToken(transaction, token, purpose, false);
    return found.problem ? { problem: found.problem.message } : { email: found.row.email };
  });
}

function requireGoodPassword(password: string, email: string): void {
  const problem = passwordProblem(password, email);
  if (problem) throw unprocessable('password-refused', problem, [{ path: 'password', message: problem }]);
}

/**
 * E-mails a reset link when the address belongs to an active account; silent otherwise.
 * Known and unknown addresses run the very same statements (the token insert simply
 * selects no row for an unknown or inactive account) and the mail leaves after the
 * answer, so neither the answer nor its timing tells whether an account exists. Requests
 * are counted per account and per address; past the limit the answer is one 429 for all.
 */
export async function requestPasswordReset(email: string, client: ClientInfo): Promise<void> {
  const normalised = email.trim().toLowerCase();
  const token = newToken(24);
  const outcome = await withIdentity(null, async (transaction) => {
    const throttle = await resetRequestState(transaction, normalised, client.address);
    if (throttle.blocked) return { kind: 'throttled' as const, retryAfter: throttle.retryAfterSeconds };
    await recordResetRequest(transaction, normalised, client.address);
    const replacements = {
      email: normalised,
      tokenHash: hashToken(token),
      expiresAt: new Date(Date.now() + TOKEN_LIFETIME_MS['password-reset']),
    };
    // A new link replaces any unused one; both statements match no row for an unknown account.
    await sequelize.query(
      `UPDATE auth_tokens SET used_at = now()
        WHERE purpose = 'password-reset' AND used_at IS NULL
          AND user_id IN (SELECT id FROM users WHERE email = :email AND status = 'active')`,
      { replacements, transaction },
    );
    const issued = await sequelize.query<{ user_id: string }>(
      `INSERT INTO auth_tokens (user_id, purpose, token_hash, expires_at)
       SELECT id, 'password-reset', :tokenHash, :expiresAt FROM users WHERE email = :email AND status = 'active'
       RETURNING user_id`,
      { replacements, type: QueryTypes.SELECT, transaction },
    );
    const userId = issued[0]?.user_id ?? null;
    await recordAudit(transaction, {
      action: 'auth.password-reset-requested',
      actorId: null,
      subjectType: userId ? 'user' : undefined,
      subjectId: userId ?? undefined,
      clientAddress: client.address,
      details: { sent: userId !== null },
    });
    return { kind: 'accepted' as const, sent: userId !== null };
  });
  if (outcome.kind === 'throttled') {
    throw tooManyRequests('Too many reset requests for this address or from this network. Wait a while, then try again.', outcome.retryAfter);
  }
  const link = `${publicUrl()}/reset-password?token=${encodeURIComponent(token)}`;
  const message = renderEmail({
    heading: 'Reset your password',
    paragraphs: [
      'Someone asked to reset the password of your Crossgrain account.',
      'The link works once, for one hour. If it was not you, ignore this message: your password stays as it is.',
    ],
    action: { label: 'Set a new password', url: link },
  });
  if (!outcome.sent) return;
  // The answer does not wait for the mail server (its delay would tell that the account exists).
  void sendMail({ to: normalised, subject: 'Reset your Crossgrain password', ...message }).catch((error: unknown) => {
    logger.error({ err: error }, 'password reset mail could not be sent');
  });
}

/** Sets a new password from a reset link and ends every session of the account. */
export async function resetPassword(token: string, password: string, client: ClientInfo): Promise<void> {
  const userId = await withIdentity(null, async (transaction) => {
    const user = await consumeToken(transaction, token, 'password-reset');
    requireGoodPassword(password, user.email);
    await User.update({ passwordHash: await hashPassword(password) }, { where: { id: user.id }, transaction });
    await actAs(transaction, user.id);
    await recordAudit(transaction, { action: 'auth.password-reset', actorId: user.id, subjectType: 'user', subjectId: user.id, clientAddress: client.address });
    await revokeAllApiTokens(transaction, user.id, 'password-reset', { id: user.id, clientAddress: client.address });
    return user.id;
  });
  await endAllSessions(userId);
}

/** Accepts an invitation: sets the password, activates the account and signs it in. */
export async function acceptInvitation(
  cookies: AstroCookies,
  token: string,
  password: string,
  client: ClientInfo,
): Promise<{ userId: string }> {
  const userId = await withIdentity(null, async (transaction) => {
    const user = await consumeToken(transaction, token, 'invitation');
    requireGoodPassword(password, user.email);
    await User.update({ passwordHash: await hashPassword(password), status: 'active' }, { where: { id: user.id }, transaction });
    await actAs(transaction, user.id);
    await recordAudit(transaction, {
      action: 'auth.invitation-accepted',
      actorId: user.id,
      subjectType: 'user',
      subjectId: user.id,
      clientAddress: client.address,
    });
    return user.id;
  });
  await startSession(cookies, userId, client);
  return { userId };
}

