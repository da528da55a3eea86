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
}

/**
 * One nonparametric bootstrap replicate (Efron and Tibshirani 1993, ch. 6): resample the
 * n rows with replacement using the replicate's own random stream
 * (Xoshiro128StarStar.forStream(seed, index)), expressed as multinomial frequency weights
 * on the original rows, and refit the model from the full-data estimate. Writes the p
 * coefficients into `out` at `offset` and returns true, or writes NaN and returns false
 * when the refit fails (singular resample, no convergence).
 */
export function bootstrapReplicate(job: BootstrapJob, index: number, counts: Float64Array, out: Float64Array, offset: number): boolean {
  const p = job.design.columns;
  resampleCounts(Xoshiro128StarStar.forStream(job.seed, index), job.design.rows, counts);
  try {
    let coefficients: Float64Array;
    if (job.family === 'linear') {
      coefficients = fitOrdinaryLeastSquares({ design: job.design, y: job.y, priorWeights: counts, coefficientsOnly: true }).coefficients;
    } else {
      const fit = fitGeneralizedLinearModel({
        design: job.design, y: job.y, priorWeights: counts, family: job.family, start: job.start, computeCovariance: false,
      });
      if (!fit.converged) throw new Error('not converged');
      coefficients = fit.coefficients;
    }
    for (let j = 0; j < p; j++) {
      if (!Number.isFinite(coefficients[j])) throw new Error('non-finite');
      out[offset + j] = coefficients[j];
    }
    return true;
  } catch {
    for (let j = 0; j < p; j++) out[offset + j] = Number.NaN;
    return false;
  }
}
