/**
 * Personal API tokens for scripts: `Authorization: Bearer cgt_…`. A token acts with its
 * owner's own roles; it is shown once, stored as a SHA-256 hash, revocable, and every use
 * is an audit event.
 */
import { fn, type Transaction } from 'sequelize';
import { ApiToken, User } from '../../../db/models';
import { recordAudit } from '../audit/audit.server';
import { withIdentity } from '@/lib/server/db';
import { notFound } from '@/lib/server/errors';
import { hashToken, loadMemberships, newToken, type SessionInfo, type SessionUser } from '@/lib/server/session';

export const API_TOKEN_PREFIX = 'cgt_';

export interface ApiTokenItem {
  id: string;
  name: string;
  prefix: string;
  createdAt: string;
  lastUsedAt: string | null;
  revokedAt: string | null;
}

/** Creates a token; the secret is returned once and never stored. */
export async function createApiToken(
  transaction: Transaction,
  userId: string,
  name: string,
  clientAddress: string,
): Promise<{ token: string; item: ApiTokenItem }> {
  const token = `${API_TOKEN_PREFIX}${newToken(24)}`;
  const prefix = token.slice(0, API_TOKEN_PREFIX.length + 6);
  const row = await ApiToken.create({ userId, name, tokenHash: hashToken(token), prefix }, { transaction });
  await recordAudit(transaction, {
    action: 'token.created', actorId: userId, subjectType: 'api-token', subjectId: row.id, clientAddress, details: { name, prefix },
  });
  return {
    token,
    item: { id: row.id, name, prefix, createdAt: new Date(row.createdAt).toISOString(), lastUsedAt: null, revokedAt: null },
  };
}

export async function listApiTokens(transaction: Transaction, userId: string): Promise<ApiTokenItem[]> {
  const rows = await ApiToken.findAll({
    attributes: ['id', 'name', 'prefix', 'createdAt', 'lastUsedAt', 'revokedAt'],
    where: { userId },
    order: [['createdAt', 'DESC']],
    raw: true,
    transaction,
  });
  const iso = (d: Date | null) => (d ? new Date(d).toISOString() : null);
  return rows.map((r) => ({ id: r.id, name: r.name, prefix: r.prefix, createdAt: iso(r.createdAt) ?? '', lastUsedAt: iso(r.lastUsedAt), revokedAt: iso(r.revokedAt) }));
}

export async function revokeApiToken(transaction: Transaction, userId: string, tokenId: string, clientAddress: string): Promise<void> {
  const [revoked] = await ApiToken.update({ revokedAt: fn('now') }, { where: { id: tokenId, userId, revokedAt: null }, transaction });
  if (revoked === 0) throw notFound('That token');
  await recordAudit(transaction, { action: 'token.revoked', actorId: userId, subjectType: 'api-token', subjectId: tokenId, clientAddress });
}

/**
 * Revokes every live token of a person, in the caller's transaction: a password reset and
 * a deactivation both end them for good (reactivation does not bring them back). One audit
 * event names how many died and why.
 */
export async function revokeAllApiTokens(
  transaction: Transaction,
  userId: string,
  reason: 'password-reset' | 'deactivated',
  actor: { id: string | null; clientAddress: string },
): Promise<number> {
  const [revoked] = await ApiToken.update({ revokedAt: fn('now') }, { where: { userId, revokedAt: null }, transaction });
  if (revoked > 0) {
    await recordAudit(transaction, {
      action: 'token.revoked', actorId: actor.id, subjectType: 'user', subjectId: userId,
      clientAddress: actor.clientAddress, details: { reason, count: revoked },
    });
  }
  return revoked;
}

/** Resolves a bearer token to its user, recording the use; null when unknown or revoked. */
export async function resolveApiToken(
  token: string,
  use: { method: string; path: string; clientAddress: string },
): Promise<{ user: SessionUser; session: SessionInfo } | null> {
  if (!token.startsWith(API_TOKEN_PREFIX)) return null;
  // Read before any identity is known: api_tokens and users have no row-level security.
  const found = await ApiToken.findOne({
    attributes: ['id', 'createdAt'],
    where: { tokenHash: hashToken(token), revokedAt: null },
    include: [{ model: User, as: 'user', attributes: ['id', 'email', 'displayName', 'isAdmin'], where: { status: 'active' } }],
  });
  const user = found?.user;
  if (!found || !user) return null;
  const row = { token_id: found.id, created_at: found.createdAt, id: user.id, email: user.email, display_name: user.displayName, is_admin: user.isAdmin };
  await withIdentity(row.id, async (transaction) => {
    await ApiToken.update({ lastUsedAt: fn('now') }, { where: { id: row.token_id }, transaction });
    await recordAudit(transaction, {
      action: 'token.used', actorId: row.id, subjectType: 'api-token', subjectId: row.token_id,
      clientAddress: use.clientAddress, details: { method: use.method, path: use.path },
    });
  });
  const now = new Date();
  return {
    user: { id: row.id, email: row.email, displayName: row.display_name, isAdmin: row.is_admin, memberships: await loadMemberships(row.id) },
    session: { id: `token:${row.token_id}`, createdAt: new Date(row.created_at), lastSeenAt: now, via: 'api-token', apiTokenId: row.token_id },
  };
}
