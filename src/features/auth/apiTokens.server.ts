/**
 * Personal API tokens for scripts: `Authorization: Bearer cgt_…`. A token acts with its
 * owner's own roles; it is shown once, stored as a SHA-256 hash, revocable, and every use
 * is an audit event.
 */
import { QueryTypes, type Transaction } from 'sequelize';
import { recordAudit } from '../audit/audit.server';
import { sequelize, withIdentity } from '../../lib/server/db';
import { notFound } from '../../lib/server/errors';
import { hashToken, loadMemberships, newToken, type SessionInfo, type SessionUser } from '../../lib/server/session';

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
  const [row] = await sequelize.query<{ id: string; created_at: Date }>(
    'INSERT INTO api_tokens (user_id, name, token_hash, prefix) VALUES (:userId, :name, :hash, :prefix) RETURNING id, created_at',
    { replacements: { userId, name, hash: hashToken(token), prefix }, type: QueryTypes.SELECT, transaction },
  );
  await recordAudit(transaction, {
    action: 'token.created', actorId: userId, subjectType: 'api-token', subjectId: row.id, clientAddress, details: { name, prefix },
  });
  return {
    token,
    item: { id: row.id, name, prefix, createdAt: new Date(row.created_at).toISOString(), lastUsedAt: null, revokedAt: null },
  };
}

export async function listApiTokens(transaction: Transaction, userId: string): Promise<ApiTokenItem[]> {
  const rows = await sequelize.query<{ id: string; name: string; prefix: string; created_at: Date; last_used_at: Date | null; revoked_at: Date | null }>(
    'SELECT id, name, prefix, created_at, last_used_at, revoked_at FROM api_tokens WHERE user_id = :userId ORDER BY created_at DESC',
    { replacements: { userId }, type: QueryTypes.SELECT, transaction },
  );
  const iso = (d: Date | null) => (d ? new Date(d).toISOString() : null);
  return rows.map((r) => ({ id: r.id, name: r.name, prefix: r.prefix, createdAt: iso(r.created_at) ?? '', lastUsedAt: iso(r.last_used_at), revokedAt: iso(r.revoked_at) }));
}

export async function revokeApiToken(transaction: Transaction, userId: string, tokenId: string, clientAddress: string): Promise<void> {
  const [row] = await sequelize.query<{ id: string }>(
    'UPDATE api_tokens SET revoked_at = now() WHERE id = :tokenId AND user_id = :userId AND revoked_at IS NULL RETURNING id',
    { replacements: { tokenId, userId }, type: QueryTypes.SELECT, transaction },
  );
  if (!row) throw notFound('That token');
  await recordAudit(transaction, { action: 'token.revoked', actorId: userId, subjectType: 'api-token', subjectId: tokenId, clientAddress });
}

/** Resolves a bearer token to its user, recording the use; null when unknown or revoked. */
export async function resolveApiToken(
  token: string,
  use: { method: string; path: string; clientAddress: string },
): Promise<{ user: SessionUser; session: SessionInfo } | null> {
  if (!token.startsWith(API_TOKEN_PREFIX)) return null;
  const [row] = await sequelize.query<{ token_id: string; id: string; email: string; display_name: string; is_admin: boolean; created_at: Date }>(
    `SELECT t.id AS token_id, t.created_at, u.id, u.email, u.display_name, u.is_admin
       FROM api_tokens t JOIN users u ON u.id = t.user_id
      WHERE t.token_hash = :hash AND t.revoked_at IS NULL AND u.status = 'active'`,
    { replacements: { hash: hashToken(token) }, type: QueryTypes.SELECT },
  );
  if (!row) return null;
  await withIdentity(row.id, async (transaction) => {
    await sequelize.query('UPDATE api_tokens SET last_used_at = now() WHERE id = :id', { replacements: { id: row.token_id }, transaction });
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
