import { choleskyFactor, choleskySolve } from '../core/symmetricPositiveDefinite.js';
import { chiSquareUpperTail } from '../distributions/chiSquare.js';
import type { OmnibusTest } from '../types.js';

/**
 * Wald test that several coefficients are all zero: W = bᵀ V_b⁻¹ b ~ χ²(k), with V_b
 * their block of the (robust) covariance. Used as the omnibus test of the modified
 * Poisson model, whose Poisson likelihood is not the outcome's, so that a likelihood-ratio
 * test would be invalid (Zou, Am J Epidemiol 2004;159:702-706, uses the sandwich for
 * inference).
 */
export function robustWaldTest(coefficients: ArrayLike<number>, covariance: ArrayLike<number>, indices: readonly number[]): OmnibusTest {
  const p = coefficients.length;
  const k = indices.length;
  const block = new Float64Array(k * k);
  const b = new Float64Array(k);
  indices.forEach((row, i) => {
    b[i] = coefficients[row];
    indices.forEach((column, j) => (block[i * k + j] = covariance[row * p + column]));
  });
  const solved = choleskySolve(choleskyFactor(block, k), b);
  let statistic = 0;
  for (let i = 0; i < k; i++) statistic += b[i] * solved[i];
  return { test: 'wald-robust', statistic, df: k, df2: null, p: chiSquareUpperTail(statistic, k) };
}
