import { quadraticForm } from '../core/symmetricPositiveDefinite.js';
import type { DesignMatrix } from '../design/designMatrix.js';

/** Link of the fitted model: logit (logistic), log (log-binomial, modified Poisson) or identity (linear). */
export type RiskLink = 'logit' | 'log' | 'identity';

/** Mean predicted risks of one group of rows with the intervention set to 0 and to 1, and their gradients. */
export interface StandardizedGroup {
  readonly rows: number;
  /** r_a = mean over the group of μ(x_i(a)ᵀb), a = 0, 1. */
  readonly risk: readonly [number, number];
  /** ∂r_a/∂b = mean over the group of μ'(η_i(a)) x_i(a), a = 0, 1 (each of length p). */
  readonly gradient: readonly [Float64Array, Float64Array];
  /** Largest counterfactual prediction (above 1 is possible under a log link). */
  readonly maxPrediction: number;
}

/**
 * Writes row i of the design into `row` with the intervention set to `arm`: the intervention
 * term becomes `arm` and every intervention × modifier product becomes arm × its modifier
 * term (the split storage of designMatrix.ts gives the rest of the row unchanged).
 */
export function counterfactualRow(design: DesignMatrix, i: number, arm: 0 | 1, row: Float64Array): void {
  const q = design.cellTerms.length;
  const r = design.freeTerms.length;
  const cellBase = design.cellOfRow[i] * q;
  for (let t = 0; t < q; t++) row[design.cellTerms[t]] = design.cellValues[cellBase + t];
  for (let k = 0; k < r; k++) row[design.freeTerms[k]] = design.free[i * r + k];
  row[design.exposureIndex] = arm;
  design.productIndices.forEach((product, k) => (row[product] = arm * row[design.modifierIndices[k]]));
}

/**
 * Standardized risks of one group of rows (g-formula, Robins 1986, conditional on the
 * group; methods.md, "Rates, doses, absolute effects"): for a = 0, 1 the mean over the
 * group of the model's prediction with the intervention set to a, and the gradient of that
 * mean with respect to the coefficients, for the delta method: mean(μ(1 − μ)·x_i(a)) under
 * the logit link, mean(μ·x_i(a)) under the log link, mean(x_i(a)) under the identity link.
 *
 * @param inGroup row i belongs to the group
 */
export function standardizedGroup(design: DesignMatrix, coefficients: ArrayLike<number>, link: RiskLink, inGroup: (i: number) => boolean): StandardizedGroup {
  const p = design.columns;
  const row = new Float64Array(p);
  const sums = [0, 0];
  const gradients: [Float64Array, Float64Array] = [new Float64Array(p), new Float64Array(p)];
  let rows = 0;
  let maxPrediction = -Infinity;
  for (let i = 0; i < design.rows; i++) {
    if (!inGroup(i)) continue;
    rows++;
    for (const arm of [0, 1] as const) {
      counterfactualRow(design, i, arm, row);
      let eta = 0;
      for (let j = 0; j < p; j++) eta += row[j] * coefficients[j];
      let mu: number;
      let slope: number;
      if (link === 'logit') {
        mu = 1 / (1 + Math.exp(-eta));
        slope = mu * (1 - mu);
      } else if (link === 'log') {
        mu = Math.exp(eta);
        slope = mu;
      } else {
        mu = eta;
        slope = 1;
      }
      sums[arm] += mu;
      if (mu > maxPrediction) maxPrediction = mu;
      const gradient = gradients[arm];
      for (let j = 0; j < p; j++) gradient[j] += slope * row[j];
    }
  }
  for (const gradient of gradients) for (let j = 0; j < p; j++) gradient[j] /= rows;
  return { rows, risk: [sums[0] / rows, sums[1] / rows], gradient: gradients, maxPrediction };
}

/** Delta-method standard error √(gᵀVg) of a function with gradient g. */
export function deltaStandardError(gradient: ArrayLike<number>, covariance: ArrayLike<number>, p: number): number {
  return Math.sqrt(Math.max(quadraticForm(gradient, covariance, p), 0));
}
