/**
 * The job queue: pg-boss on our own PostgreSQL, so several app servers and workers on
 * several machines share it without another service. Its schema and the run queue are
 * created by a migration as the owner; the application connects as the app role and
 * never migrates it.
 */
import PgBoss from 'pg-boss';
import { env } from './env';

export const RUN_QUEUE = 'analysis-run';
export const QUEUE_SCHEMA = 'pgboss';

export interface RunJob {
  runId: string;
  /** The analyst who started the run: the worker acts as them, and row-level security checks it. */
  startedBy: string;
}

let sender: PgBoss | null = null;

/** A pg-boss instance for the app role. Workers supervise (expire and archive jobs); senders do not. */
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
  boss.on('error', () => {
    // Connection errors surface on the next send or fetch; pg-boss also emits them here.
  });
  return boss;
}

/** Puts a run on the queue (one shared sender per process). */
export async function enqueueRun(job: RunJob): Promise<string | null> {
  if (!sender) {
    sender = createQueue();
    await sender.start();
  }
  return sender.send(RUN_QUEUE, { ...job }, { retryLimit: 0, expireInSeconds: 3600 });
}
