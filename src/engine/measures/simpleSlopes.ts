import type { EffectScale, WaldReference } from './linearContrast.js';
import { linearContrastInterval } from './linearContrast.js';
import type { SlopeEntry } from '../types.js';

export interface SlopePoint {
  readonly label: string;
  /** Modifier value on its own scale. */
  readonly at: number;
}

/**
 * Simple slopes (Aiken and West, Multiple Regression: Testing and Interpreting
 * Interactions, 1991): the conditional effect of the intervention, b1 + b3·(x − c), at
 * chosen modifier values x (by default the mean and ± 1 SD), with Wald intervals.
 * For ratio models estimate and limits are ratios and se is on the log scale.
 *
 * Formula: Var = V11 + 2(x − c)V13 + (x − c)²V33.
 */
export function simpleSlopes(
  coefficients: ArrayLike<number>,
  covariance: ArrayLike<number>,
  exposureIndex: number,
  productIndex: number,
  centre: number,
  points: readonly SlopePoint[],
  reference: WaldReference,
  scale: EffectScale,
): SlopeEntry[] {
  const p = coefficients.length;
  return points.map(({ label, at }) => {
    const contrast = new Float64Array(p);
    contrast[exposureIndex] = 1;
    contrast[productIndex] = at - centre;
    const effect = linearContrastInterval(coefficients, covariance, contrast, reference, scale);
    return { label, at, estimate: effect.estimate, se: effect.se, lower: effect.lower, upper: effect.upper, p: effect.p };
  });
}

/** Quantile by linear interpolation between order statistics (R's quantile type 7). */
export function quantileType7(sorted: Float64Array, probability: number): number {
  const position = (sorted.length - 1) * probability;
  const low = Math.floor(position);
  const high = Math.min(low + 1, sorted.length - 1);
  return sorted[low] + (position - low) * (sorted[high] - sorted[low]);
}
