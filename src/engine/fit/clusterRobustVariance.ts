import { sandwich } from '../core/symmetricPositiveDefinite.js';
import { designRow, type DesignMatrix } from '../design/designMatrix.js';
import { linearPredictor } from './crossProductAccumulator.js';

/** The model whose score contributions are summed: the three IRLS families and least squares. */
export type ScoreFamily = 'binomial-logit' | 'poisson-log' | 'binomial-log' | 'linear';

/** The name the results give this variance. */
export const CLUSTER_ROBUST_NAME = 'cluster-robust (CR1, Liang and Zeger 1986)';

/**
 * Cluster-robust (sandwich) covariance of a fitted model, CR1: Liang and Zeger,
 * Biometrika 1986;73:13-22, with the usual small-sample factor (as in Stata's vce(cluster);
 * see methods.md).
 *
 * Formula: V = G/(G − 1) · (n − 1)/(n − p) · B (Σ_g U_g U_gᵀ) B, where U_g = Σ_{i ∈ g} xᵢ sᵢ
 * sums the score contributions of cluster g at the final coefficients and B is the
 * inverse information at the same coefficients (the fit's (XᵀWX)⁻¹; for least squares
 * (XᵀX)⁻¹). Score factors sᵢ: y − μ for logistic and Poisson (the log-linear Poisson score,
 * with any offset inside μ), (y − μ)/(1 − μ) for the log-binomial model (the binomial
 * score under the log link), and the residual e = y − xβ for least squares. n counts the
 * analysed rows (frequency-weighted extracts are expanded before the fit), G the clusters.
 * Reference: written by hand in base R in tests/reference/r/make-cluster-rate-weight-fixtures.R
 * (`U <- rowsum(X * s, cluster); c * B %*% crossprod(U) %*% B`).
 *
 * @example clusterRobustVariance(design, y, beta, bread, 'binomial-logit', codes, 40)
 */
export function clusterRobustVariance(
  design: DesignMatrix,
  y: Float64Array,
  coefficients: ArrayLike<number>,
  bread: Float64Array,
  family: ScoreFamily,
  clusterOfRow: Int32Array,
  clusterCount: number,
): Float64Array {
  const p = design.columns;
  const n = design.rows;
  const eta = linearPredictor(design, coefficients);
  const scores = new Float64Array(clusterCount * p);
  const row = new Float64Array(p);
  for (let i = 0; i < n; i++) {
    let factor: number;
    if (family === 'linear') factor = y[i] - eta[i];
    else if (family === 'binomial-logit') factor = y[i] - 1 / (1 + Math.exp(-eta[i]));
    else if (family === 'poisson-log') factor = y[i] - Math.exp(eta[i]);
    else {
      const mean = Math.exp(eta[i]);
      factor = (y[i] - mean) / (1 - mean);
    }
    designRow(design, i, row);
    const base = clusterOfRow[i] * p;
    for (let j = 0; j < p; j++) scores[base + j] += row[j] * factor;
  }
  const meat = new Float64Array(p * p);
  for (let g = 0; g < clusterCount; g++) {
    const base = g * p;
    for (let j = 0; j < p; j++) {
      const uj = scores[base + j];
      for (let k = j; k < p; k++) meat[j * p + k] += uj * scores[base + k];
    }
  }
  for (let j = 0; j < p; j++) for (let k = 0; k < j; k++) meat[j * p + k] = meat[k * p + j];
  const factor = (clusterCount / (clusterCount - 1)) * ((n - 1) / (n - p));
  const covariance = sandwich(bread, meat, p);
  for (let j = 0; j < covariance.length; j++) covariance[j] *= factor;
  return covariance;
}
