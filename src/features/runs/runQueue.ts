/**
 * The run queue: one job per run, written in the same transaction as the run row, so a
 * run never exists without the job that will execute it (and a rolled-back start leaves
 * neither). The queue itself is created by a migration (create-analyses-and-runs).
 */
import type { Transaction } from 'sequelize';
import { sendInTransaction } from '@/lib/server/queue';

export const RUN_QUEUE = 'analysis-run';

export interface RunJob {
  runId: string;
  /** The analyst who started the run: the worker acts as them, and row-level security checks it. */
  startedBy: string;
}

/** Puts a run's job on the queue inside the transaction that wrote the run. */
export type RunEnqueuer = (transaction: Transaction, job: RunJob) => Promise<void>;

export const enqueueRun: RunEnqueuer = async (transaction, job) => {
  // A retry would re-run the same run record; a retry in Crossgrain is a new run instead.
  await sendInTransaction(transaction, RUN_QUEUE, { ...job }, { retryLimit: 0, expireInSeconds: 3600 });
};
