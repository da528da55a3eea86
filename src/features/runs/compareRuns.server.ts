/** Loads the runs a comparison names (each readable by the caller, else 404) and compares them. */
import type { Transaction } from 'sequelize';
import { cautionText } from '@/lib/cautions';
import type { SessionUser } from '@/lib/server/session';
import { comparedRunIds } from './compareQuery';
import { readableRun } from './runAccess';
import { compareRuns } from './runComparison';
import type { RunView } from './runs.server';

/** The runs named by the query, in order, with their results (empty when it names none). */
export async function loadComparedRuns(transaction: Transaction, user: SessionUser, params: URLSearchParams): Promise<RunView[]> {
  const ids = comparedRunIds(params);
  const runs: RunView[] = [];
  for (const id of ids) runs.push(await readableRun(transaction, user, id, { withResult: true }));
  return runs;
}

/** The comparison as the API answers it. */
export async function compareQueryRuns(transaction: Transaction, user: SessionUser, params: URLSearchParams) {
  const runs = await loadComparedRuns(transaction, user, params);
  const comparison = compareRuns(runs.map((run) => ({ id: run.id, spec: run.spec, result: run.result })));
  return {
    caution: cautionText(),
    ...comparison,
    runs: runs.map((run, i) => ({
      id: run.id, letter: comparison.runs[i].letter, status: run.status, analysisId: run.analysisId, queuedAt: run.queuedAt,
      startedBy: run.startedBy.name, extractSha256: run.extractSha256, engineVersion: run.engineVersion, specHash: run.specHash,
    })),
  };
}
