/**
 * The first step of every endpoint about one run: load it under the caller's identity and
 * check they may read it, answering 404 (not 403) otherwise, so a run of another
 * initiative looks the same as no run at all.
 */
import type { Transaction } from 'sequelize';
import { Run } from '../../../db/models';
import { authorize } from '@/lib/server/authorize';
import { notFound } from '@/lib/server/errors';
import type { SessionUser } from '@/lib/server/session';
import { resultDigest } from './canonical';
import { getRun, type RunView } from './runs.server';

export async function readableRun(transaction: Transaction, user: SessionUser, runId: string, options: { withResult?: boolean } = {}): Promise<RunView> {
  const run = await getRun(transaction, runId, { withResult: options.withResult ?? false });
  if (!run) throw notFound('That run');
  authorize(user, 'read', 'Run', { initiativeId: run.initiativeId }, { hide: true });
  return run;
}

/**
 * The digest of a run's result as stored (SHA-256 of its canonical JSON), the one a
 * verifying re-run compares (compareRuns): a review signature is bound to it. Null when
 * the run has no result.
 */
export async function storedResultDigest(transaction: Transaction, runId: string): Promise<string | null> {
  const row = await Run.findByPk(runId, { attributes: ['result'], raw: true, transaction });
  return row?.result ? resultDigest(row.result) : null;
}
