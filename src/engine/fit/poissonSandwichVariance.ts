import { sandwich } from '../core/symmetricPositiveDefinite.js';
import type { DesignMatrix } from '../design/designMatrix.js';
import { accumulateWeighted, assembleCrossProducts, createAccumulator, linearPredictor } from './crossProductAccumulator.js';

/**
 * Robust (sandwich) covariance of a Poisson log-linear fit to a 0/1 outcome, the
 * "modified Poisson" approach to risk ratios (Zou, Am J Epidemiol 2004;159:702-706).
 *
 * Formula: V = B M B with bread B = (XᵀWX)⁻¹ (the model's unscaled covariance, W = μ̂ at
 * the final coefficients, not the previous IRLS step's) and meat M = Σ (yᵢ − μ̂ᵢ)² xᵢxᵢᵀ at
 * the same fitted means.
 * Variant: HC0, with no finite-sample factor (neither n/(n − p) nor leverage terms); in
 * R, on a fit run to the maximum (glm.control(epsilon = 1e-14, maxit = 100)):
 * `B <- summary(fit)$cov.unscaled; U <- model.matrix(fit) * (y - fitted(fit));
 * B %*% crossprod(U) %*% B`.
 *
 * @example poissonSandwichVariance(design, y, fit.coefficients, fit.covarianceUnscaled)
 */
export function poissonSandwichVariance(
  design: DesignMatrix,
  y: Float64Array,
  coefficients: ArrayLike<number>,
  bread: Float64Array,
): Float64Array {
  const p = design.columns;
  const eta = linearPredictor(design, coefficients);
  const squaredResiduals = new Float64Array(design.rows);
  for (let i = 0; i < design.rows; i++) {
    const residual = y[i] - Math.exp(eta[i]);
    squaredResiduals[i] = residual * residual;
  }
  const accumulator = createAccumulator(design);
  accumulateWeighted(design, squaredResiduals, null, accumulator);
  const meat = new Float64Array(p * p);
  assembleCrossProducts(design, accumulator, meat, new Float64Array(p));
  return sandwich(bread, meat, p);
}
