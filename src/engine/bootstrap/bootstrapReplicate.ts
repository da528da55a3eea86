import type { DesignMatrix } from '../design/designMatrix.js';
import { fitGeneralizedLinearModel, type GlmFamily } from '../fit/iterativelyReweightedLeastSquares.js';
import { fitOrdinaryLeastSquares } from '../fit/ordinaryLeastSquares.js';
import { resampleCounts, Xoshiro128StarStar } from '../random/xoshiro128StarStar.js';

/** Everything a replicate needs; plain arrays so that it can cross into a worker thread. */
export interface BootstrapJob {
  readonly design: DesignMatrix;
  readonly y: Float64Array;
  readonly family: GlmFamily | 'linear';
  /** Full-data coefficients: the warm start of every refit. */
  readonly start: Float64Array;
  readonly replicates: number;
  readonly seed: number;
  /**
   * Binary outcome with a categorical modifier: each row's joint cell (2 × modifier level +
   * exposure), so that a resample with a cell of no events (or only events) is recognised
   * as separated; null otherwise.
   */
  readonly jointCellOfRow: Int32Array | null;
  readonly jointCells: number;
}

/** How a replicate ended (written to the status array; the measures add UNDEFINED_MEASURE). */
export const REPLICATE_OK = 0;
export const REPLICATE_NOT_CONVERGED = 1;
export const REPLICATE_SEPARATED = 2;
export const REPLICATE_FIT_FAILED = 3;
export const REPLICATE_UNDEFINED_MEASURE = 4;

/** True when some joint cell of the resample has rows but no events, or (binomial models) only events. */
function separatedCell(job: BootstrapJob, counts: Float64Array): boolean {
  const cellOfRow = job.jointCellOfRow;
  if (cellOfRow === null) return false;
  const rows = new Float64Array(job.jointCells);
  const events = new Float64Array(job.jointCells);
  for (let i = 0; i < counts.length; i++) {
    const weight = counts[i];
    rows[cellOfRow[i]] += weight;
    events[cellOfRow[i]] += weight * job.y[i];
  }
  const binomial = job.family === 'binomial-logit' || job.family === 'binomial-log';
  for (let cell = 0; cell < job.jointCells; cell++) {
    if (rows[cell] > 0 && (events[cell] === 0 || (binomial && events[cell] === rows[cell]))) return true;
  }
  return false;
}

/**
 * One nonparametric bootstrap replicate (Efron and Tibshirani 1993, ch. 6): resample the
 * n rows with replacement using the replicate's own random stream
 * (Xoshiro128StarStar.forStream(seed, index)), expressed as multinomial frequency weights
 * on the original rows, and refit the model from the full-data estimate. Writes the p
 * coefficients into `out` at `offset` and returns REPLICATE_OK, or writes NaN and returns
 * why the replicate is left out: REPLICATE_SEPARATED (a joint exposure × modifier cell of
 * the resample with no events, or only events under a binomial model, or fitted
 * probabilities of 0 or 1: the estimate does not exist), REPLICATE_NOT_CONVERGED, or
 * REPLICATE_FIT_FAILED (singular resample, no valid fitted means, non-finite coefficients).
 */
export function bootstrapReplicate(job: BootstrapJob, index: number, counts: Float64Array, out: Float64Array, offset: number): number {
  const p = job.design.columns;
  resampleCounts(Xoshiro128StarStar.forStream(job.seed, index), job.design.rows, counts);
  const fail = (status: number): number => {
    for (let j = 0; j < p; j++) out[offset + j] = Number.NaN;
    return status;
  };
  if (separatedCell(job, counts)) return fail(REPLICATE_SEPARATED);
  let coefficients: Float64Array;
  try {
    if (job.family === 'linear') {
      coefficients = fitOrdinaryLeastSquares({ design: job.design, y: job.y, priorWeights: counts, coefficientsOnly: true }).coefficients;
    } else {
      const fit = fitGeneralizedLinearModel({
        design: job.design, y: job.y, priorWeights: counts, family: job.family, start: job.start, computeCovariance: false,
      });
      if (!fit.converged) return fail(REPLICATE_NOT_CONVERGED);
      if (fit.boundaryFittedCount > 0) return fail(REPLICATE_SEPARATED);
      coefficients = fit.coefficients;
    }
  } catch {
    return fail(REPLICATE_FIT_FAILED);
  }
  for (let j = 0; j < p; j++) {
    if (!Number.isFinite(coefficients[j])) return fail(REPLICATE_FIT_FAILED);
    out[offset + j] = coefficients[j];
  }
  return REPLICATE_OK;
}
