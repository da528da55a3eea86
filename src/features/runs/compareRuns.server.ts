/** Loads the runs a comparison names (each readable by the caller, else 404) and compares them. */
import type { Transaction } from 'sequelize';
import { isScreenSpec } from '@/features/analyses/screenSpecs';
import { cautionText } from '@/lib/cautions';
import { AppError } from '@/lib/server/errors';
import type { SessionUser } from '@/lib/server/session';
import { comparedRunIds } from './compareQuery';
import { readableRun } from './runAccess';
import { compareRuns } from './runComparison';
import type { RunView } from './runs.server';

/**
 * The runs named by the query, in order, with their results (empty when it names none). A
 * subgroup screen is refused (400 `screen-not-comparable`): its figures are one model per
 * modifier, which the side-by-side tables do not hold; its full analyses of each modifier
 * are runs that compare.
 */
export async function loadComparedRuns(transaction: Transaction, user: SessionUser, params: URLSearchParams): Promise<RunView[]> {
  const ids = comparedRunIds(params);
  const runs: RunView[] = [];
  for (const id of ids) runs.push(await readableRun(transaction, user, id, { withResult: true }));
  const screen = runs.find((run) => isScreenSpec(run.spec));
  if (screen) {
    throw new AppError(400, 'screen-not-comparable', `Run ${screen.id.slice(0, 8)} is a subgroup screen, which is not compared side by side. Open the full analysis of a modifier from the screen's results and compare its runs instead.`);
  }
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
