/**
 * The job queue: pg-boss on our own PostgreSQL, so several app servers and workers on
 * several machines share it without another service. Its schema and queues are created
 * by migrations as the owner; the application connects as the app role and never
 * migrates it. Which queues exist and what their jobs carry belongs to the product areas
 * (the run queue: src/features/runs/runQueue.ts).
 */
import PgBoss from 'pg-boss';
import { QueryTypes, type Transaction } from 'sequelize';
import { sequelize } from './db';
import { env } from './env';
import { isDatabaseUnavailable } from './errors';
import { logger } from './logger';

export const QUEUE_SCHEMA = 'pgboss';

/**
 * A pg-boss instance for the app role. Workers supervise (expire and archive jobs); senders
 * do not. pg-boss keeps its own small pool (`max`), opened only when it is started: the
 * worker's. A sender is never started, since every send runs on a request transaction.
 */
export function createQueue(options: { supervise?: boolean } = {}): PgBoss {
  const boss = new PgBoss({
    host: env.CROSSGRAIN_DB_HOST,
    port: env.CROSSGRAIN_DB_PORT,
    database: env.CROSSGRAIN_DB_NAME,
    user: env.CROSSGRAIN_DB_APP_USER,
    password: env.CROSSGRAIN_DB_APP_PASSWORD,
    schema: QUEUE_SCHEMA,
    migrate: false,
    schedule: false,
    supervise: options.supervise ?? false,
    max: 3,
    application_name: 'crossgrain',
  });
  // Without a listener an 'error' event would end the process. A database outage makes
  // every poll fail; one warning per outage is enough, and polling resumes by itself.
  let lastWarned = 0;
  boss.on('error', (error) => {
    if (Date.now() - lastWarned < 10_000) return;
    lastWarned = Date.now();
    logger.warn({ reason: error.message, code: (error as Error & { code?: string }).code }, 'job queue cannot reach the database; it keeps trying');
  });
  return boss;
}

/**
 * Starts a queue, waiting for the database when it cannot be reached (a worker started
 * during an outage, or before its database): retries with a doubling delay up to 30 s and
 * says why in the log. Any other failure is thrown.
 */
export async function startWhenReachable(boss: PgBoss): Promise<void> {
  for (let attempt = 1; ; attempt++) {
    try {
      await boss.start();
      return;
    } catch (error) {
      if (!isDatabaseUnavailable(error)) throw error;
      const delayMs = Math.min(30_000, 500 * 2 ** attempt);
      logger.warn({ reason: error instanceof Error ? error.message : String(error), retryInMs: delayMs }, 'job queue cannot reach the database yet; retrying');
      await new Promise((resolve) => setTimeout(resolve, delayMs));
    }
  }
}

/**
 * pg-boss's database interface on an open transaction: its SQL runs on the
 * transaction's connection, so what it writes commits or rolls back with the rest.
 */
export function transactionDb(transaction: Transaction): PgBoss.Db {
  return {
    executeSql: async (text, values) => {
      // pg reads undefined as null; sequelize's bind needs it said.
      const bind = values.map((value: unknown) => (value === undefined ? null : value));
      // pg-boss's own SQL, run as it wrote it: raw by nature.
      const rows = await sequelize.query<Record<string, unknown>>(text, { bind, type: QueryTypes.SELECT, transaction });
      return { rows };
    },
  };
}

/** One sender per process; it never opens connections of its own (every send names a transaction). */
let sender: PgBoss | null = null;

/**
 * Puts a job on a queue inside the caller's transaction: the job exists exactly when
 * the rows written beside it do. Throws when the queue refused it (no such queue).
 */
export async function sendInTransaction(
  transaction: Transaction,
  queue: string,
  data: object,
  options: Omit<PgBoss.SendOptions, 'db'> = {},
): Promise<string> {
  sender ??= createQueue();
  const id = await sender.send(queue, data, { ...options, db: transactionDb(transaction) });
  if (!id) throw new Error(`The queue "${queue}" did not accept the job.`);
  return id;
}
