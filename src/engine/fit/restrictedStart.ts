import { Matrix, solve } from 'ml-matrix';

/**
 * Starting values for a refit without some terms (the omnibus test's model without the
 * products), from the full fit: the restricted estimate
 * β̃ᵣ = βᵣ − Vᵣₚ Vₚₚ⁻¹ βₚ, where p are the dropped terms, r the kept ones and V the full
 * fit's covariance. It is the maximum of the quadratic approximation of the log-likelihood
 * at the full estimate under βₚ = 0 (Cox and Hinkley, Theoretical Statistics, 1974, §9.3),
 * so IRLS started there needs a step or two instead of a whole fit. Only the start changes:
 * the refit still runs to the maximum under the same convergence rule.
 *
 * Returns null when the result is not finite (the refit then starts from the default).
 *
 * @example restrictedStart(fit.coefficients, fit.covariance, 6, [4, 5]) // 4 coefficients
 */
export function restrictedStart(coefficients: Float64Array, covariance: Float64Array, size: number, dropped: readonly number[]): Float64Array | null {
  const droppedSet = new Set(dropped);
  const kept: number[] = [];
  for (let j = 0; j < size; j++) if (!droppedSet.has(j)) kept.push(j);
  const v = Matrix.from1DArray(size, size, covariance);
  const beta = Matrix.columnVector(coefficients);
  const droppedBeta = beta.selection(dropped, [0]);
  const adjustment = v.selection(kept, dropped).mmul(solve(v.selection(dropped, dropped), droppedBeta));
  const start = Float64Array.from(kept, (j, k) => coefficients[j] - adjustment.get(k, 0));
  return start.every(Number.isFinite) ? start : null;
}
