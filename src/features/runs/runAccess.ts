/**
 * The first step of every endpoint about one run: load it under the caller's identity and
 * check they may read it, answering 404 (not 403) otherwise, so a run of another
 * initiative looks the same as no run at all.
 */
import type { Transaction } from 'sequelize';
import { Run } from '../../../db/models';
import type { Result } from '@/engine/boundary/schemas';
import { authorize, can } from '@/lib/server/authorize';
import { notFound } from '@/lib/server/errors';
import { readRunStamp, type PageRead } from '@/lib/server/requestReads';
import type { SessionUser } from '@/lib/server/session';
import { resultDigest } from './canonical';
import { cachedResult } from './finishedResults';
import { getRun, type RunView } from './runs.server';

export async function readableRun(transaction: Transaction, user: SessionUser, runId: string, options: { withResult?: boolean } = {}): Promise<RunView> {
  const run = await getRun(transaction, runId, { withResult: options.withResult ?? false });
  if (!run) throw notFound('That run');
  authorize(user, 'read', 'Run', { initiativeId: run.initiativeId }, { hide: true });
  return run;
}

/**
 * The result of a succeeded run the caller may read, in one round trip (none when the
 * session's read brought the run along, `along`), when this process has parsed it before
 * (finishedResults.ts): the run's row is read under the caller's identity and the same
 * rule as readableRun applies. Undefined means "take the usual path"
 * (readableRun in a transaction), which gives the 404s and reads the result.
 */
export async function quickReadableResult(user: SessionUser, runId: string, along: PageRead | null = null): Promise<Result | undefined> {
  const result = cachedResult(runId);
  if (result === undefined) return undefined;
  const row = await readRunStamp(user.id, runId, along);
  if (!row || row.status !== 'succeeded' || !can(user, 'read', 'Run', { initiativeId: row.initiativeId })) return undefined;
  return result;
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
