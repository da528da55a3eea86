import { QueryTypes, type Transaction } from 'sequelize';
import { createSequelize } from '../../../db/connection';
import { initModels } from '../../../db/models';

/**
 * The application's connection pool: the `app` role, which row-level security binds.
 * Every model and query of a request runs on it. Two other pools exist per process, each
 * saying why where it is made: the session library's (src/lib/server/session.ts; lucia's
 * adapter takes a pg Pool) and pg-boss's own (src/lib/server/queue.ts; the worker's queue
 * fetches and supervises jobs on it, while sends ride on this pool's transactions).
 * Sequelize marks a client that errors while idle as invalid and drops it from the pool,
 * and db/connection.ts logs the error, so a lost connection never crashes the process.
 */
export const sequelize = createSequelize('app');
export const models = initModels(sequelize);

/** A function that runs work inside the caller's request transaction. */
export type Scoped = <T>(work: (transaction: Transaction) => Promise<T>) => Promise<T>;

/**
 * Opens one transaction for a request, tells PostgreSQL who is asking, and runs `work`
 * in it. The identity is transaction-local (`set_config(..., true)`), so it cannot leak to
 * the next request that borrows the same pooled connection. `null` means anonymous:
 * every row-level security policy then matches nothing.
 */
export async function withIdentity<T>(
  userId: string | null,
  work: (transaction: Transaction) => Promise<T>,
): Promise<T> {
  return sequelize.transaction(async (transaction) => {
    // set_config, the row-level-security identity: raw SQL.
    await sequelize.query("SELECT set_config('app.user_id', :userId, true)", {
      replacements: { userId: userId ?? '' },
      transaction,
      type: QueryTypes.SELECT,
    });
    return work(transaction);
  });
}

/** Binds `withIdentity` to one user, for `locals.db` in the middleware. */
export function scopedTo(userId: string | null): Scoped {
  return (work) => withIdentity(userId, work);
}

/** True when the database answers a trivial query within the pool's acquire timeout. */
export async function databaseAnswers(): Promise<boolean> {
  try {
    // A liveness probe, no table: raw SQL.
    await sequelize.query('SELECT 1', { type: QueryTypes.SELECT });
    return true;
  } catch {
    return false;
  }
}

/**
 * Switches the identity inside an open transaction, for flows that learn who the user is
 * part-way (accepting an invitation, resetting a password), so their audit events name
 * the user as the actor.
 */
export async function actAs(transaction: Transaction, userId: string): Promise<void> {
  // set_config, the row-level-security identity: raw SQL.
  await sequelize.query("SELECT set_config('app.user_id', :userId, true)", {
    replacements: { userId },
    transaction,
    type: QueryTypes.SELECT,
  });
}
