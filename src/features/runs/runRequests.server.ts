/**
 * One run per click: a run start may carry an `Idempotency-Key` header. The first request
 * with a key claims it (per person and analysis) and starts the run; any request with the
 * same key in the next 24 hours gets that run back (the same 202 and `{ runId }`) instead of
 * queuing another, and one with a different body is refused. Two requests that arrive
 * together (a double-click) meet at the key's primary key: the second waits for the first
 * transaction and then reads its run. After 24 hours the key may start a new run.
 */
import { createHash } from 'node:crypto';
import { QueryTypes, type Transaction } from 'sequelize';
import { sequelize } from '@/lib/server/db';
import { badRequest, unprocessable } from '@/lib/server/errors';
import { canonicalJson } from './canonical';

/** How long a key keeps answering with its run. */
export const KEY_LIFETIME_HOURS = 24;

/** The header value as a key, or null when absent; a clear 400 when it is unusable. */
export function idempotencyKeyOf(headers: Headers): string | null {
  const raw = headers.get('idempotency-key');
  if (raw === null) return null;
  const key = raw.trim();
  if (key.length < 1 || key.length > 200 || !/^[\x21-\x7e]+$/.test(key)) {
    throw badRequest('The Idempotency-Key header must be 1 to 200 visible ASCII characters, such as a UUID.');
  }
  return key;
}

/** The SHA-256 of the request body, canonical when it is JSON (an empty body counts as `{}`). */
export function bodyHashOf(text: string): string {
  let canonical = text.trim() === '' ? '{}' : text;
  try {
    canonical = canonicalJson(JSON.parse(canonical));
  } catch {
    // Not JSON: the bytes as sent.
  }
  return createHash('sha256').update(canonical).digest('hex');
}

interface Claim { userId: string; analysisId: string; key: string; bodyHash: string }

/**
 * Claims the key for a new run (true), or returns the run an earlier request with the same
 * key started (its id). A key whose first request had another body is refused (422).
 */
export async function claimKey(transaction: Transaction, claim: Claim): Promise<{ runId: string } | 'claimed'> {
  // INSERT … ON CONFLICT with a condition on the stored row (a key past its lifetime is taken over): raw SQL.
  const claimed = await sequelize.query<{ user_id: string }>(
    `INSERT INTO run_requests (user_id, analysis_id, idempotency_key, body_hash)
     VALUES (:userId, :analysisId, :key, :bodyHash)
     ON CONFLICT (user_id, analysis_id, idempotency_key) DO UPDATE
       SET body_hash = EXCLUDED.body_hash, run_id = NULL, created_at = now()
       WHERE run_requests.created_at < now() - make_interval(hours => :hours)
     RETURNING user_id`,
    { replacements: { ...claim, hours: KEY_LIFETIME_HOURS }, type: QueryTypes.SELECT, transaction },
  );
  if (claimed.length > 0) return 'claimed';
  const [earlier] = await sequelize.query<{ body_hash: string; run_id: string | null }>(
    `SELECT body_hash, run_id FROM run_requests WHERE user_id = :userId AND analysis_id = :analysisId AND idempotency_key = :key`,
    { replacements: { ...claim }, type: QueryTypes.SELECT, transaction },
  );
  if (!earlier?.run_id) throw unprocessable('idempotency-key-unsettled', 'A request with this Idempotency-Key is still being handled. Try again in a moment.');
  if (earlier.body_hash !== claim.bodyHash) {
    throw unprocessable(
      'idempotency-key-reused',
      'This Idempotency-Key was already used with a different request body for this analysis in the last 24 hours. Send a new key for a new request.',
    );
  }
  return { runId: earlier.run_id };
}

/** Records the run a claimed key started. */
export async function settleKey(transaction: Transaction, claim: Claim, runId: string): Promise<void> {
  await sequelize.query(
    'UPDATE run_requests SET run_id = :runId WHERE user_id = :userId AND analysis_id = :analysisId AND idempotency_key = :key',
    { replacements: { ...claim, runId }, transaction },
  );
}
