/**
 * Sign-in throttling, per account and per client address, stored in PostgreSQL so that it
 * holds across several app servers. The account is keyed by a hash of the e-mail typed,
 * so an address with no account behaves exactly like one with an account.
 */
import { createHash } from 'node:crypto';
import { QueryTypes, type Transaction } from 'sequelize';
import { SigninAttempt } from '../../../db/models';
import { sequelize } from '@/lib/server/db';
import { env } from '@/lib/server/env';

export function accountKey(email: string): string {
  return createHash('sha256').update(`crossgrain-signin:${email.trim().toLowerCase()}`).digest('hex');
}

export interface ThrottleState {
  blocked: boolean;
  /** Seconds until the oldest counted failure leaves the window. */
  retryAfterSeconds: number;
}

/** Whether this account or address has used up its failures in the current window. */
export async function throttleState(transaction: Transaction, email: string, address: string): Promise<ThrottleState> {
  // Two filtered counts in one aggregate over a sliding window: raw SQL.
  const [row] = await sequelize.query<{ account: string; address: string; oldest: Date | null }>(
    `SELECT count(*) FILTER (WHERE account_key = :key) AS account,
            count(*) FILTER (WHERE client_address = :address) AS address,
            min(attempted_at) AS oldest
       FROM signin_attempts
      WHERE NOT succeeded AND attempted_at > now() - make_interval(mins => :minutes)
        AND (account_key = :key OR client_address = :address)`,
    {
      replacements: { key: accountKey(email), address, minutes: env.CROSSGRAIN_SIGNIN_WINDOW_MINUTES },
      type: QueryTypes.SELECT,
      transaction,
    },
  );
  const blocked =
    Number(row.account) >= env.CROSSGRAIN_SIGNIN_MAX_FAILURES_ACCOUNT ||
    Number(row.address) >= env.CROSSGRAIN_SIGNIN_MAX_FAILURES_ADDRESS;
  const windowMs = env.CROSSGRAIN_SIGNIN_WINDOW_MINUTES * 60_000;
  const retryAfterSeconds = row.oldest
    ? Math.max(1, Math.ceil((new Date(row.oldest).getTime() + windowMs - Date.now()) / 1000))
    : 0;
  return { blocked, retryAfterSeconds };
}

/** Records one attempt. A success clears the account's earlier failures. */
export async function recordAttempt(transaction: Transaction, email: string, address: string, succeeded: boolean): Promise<void> {
  const key = accountKey(email);
  if (succeeded) {
    await SigninAttempt.destroy({ where: { accountKey: key, succeeded: false }, transaction });
  }
  await SigninAttempt.create({ accountKey: key, clientAddress: address, succeeded }, { transaction });
}

/**
 * Password-reset requests share the attempts table with sign-ins, under their own account
 * key and a "reset:"-prefixed address so that the two never count against each other.
 * Every request counts (a reset request has no failure), per account and per address.
 */
function resetKeys(email: string, address: string): { key: string; address: string } {
  const key = createHash('sha256').update(`crossgrain-reset:${email.trim().toLowerCase()}`).digest('hex');
  return { key, address: `reset:${address}` };
}

/** Whether this account or address has asked for as many reset links as the window allows. */
export async function resetRequestState(transaction: Transaction, email: string, address: string): Promise<ThrottleState> {
  const keys = resetKeys(email, address);
  const [row] = await sequelize.query<{ account: string; address: string; oldest: Date | null }>(
    `SELECT count(*) FILTER (WHERE account_key = :key) AS account,
            count(*) FILTER (WHERE client_address = :address) AS address,
            min(attempted_at) AS oldest
       FROM signin_attempts
      WHERE attempted_at > now() - make_interval(mins => :minutes)
        AND (account_key = :key OR client_address = :address)`,
    {
      replacements: { ...keys, minutes: env.CROSSGRAIN_RESET_WINDOW_MINUTES },
      type: QueryTypes.SELECT,
      transaction,
    },
  );
  const blocked =
    Number(row.account) >= env.CROSSGRAIN_RESET_MAX_PER_ACCOUNT || Number(row.address) >= env.CROSSGRAIN_RESET_MAX_PER_ADDRESS;
  const windowMs = env.CROSSGRAIN_RESET_WINDOW_MINUTES * 60_000;
  const retryAfterSeconds = row.oldest
    ? Math.max(1, Math.ceil((new Date(row.oldest).getTime() + windowMs - Date.now()) / 1000))
    : 0;
  return { blocked, retryAfterSeconds };
}

/** Counts one reset request, whether or not the account exists. */
export async function recordResetRequest(transaction: Transaction, email: string, address: string): Promise<void> {
  const keys = resetKeys(email, address);
  await SigninAttempt.create({ accountKey: keys.key, clientAddress: keys.address, succeeded: false }, { transaction });
}
