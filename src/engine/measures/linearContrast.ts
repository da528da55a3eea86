import { normalTwoSidedP } from '../distributions/normal.js';
import { studentTTwoSidedP } from '../distributions/studentT.js';
import { quadraticForm } from '../core/symmetricPositiveDefinite.js';
import type { EffectInterval } from '../types.js';

/** How an estimate on the link scale is shown: exponentiated (ratios) or as is (differences). */
export type EffectScale = 'ratio' | 'difference';

/** A Wald reference distribution: normal (df = Infinity) or t on the residual df. */
export interface WaldReference {
  readonly critical: number;
  readonly df: number;
}

/**
 * Wald estimate, standard error, interval and p-value of a linear combination cᵀβ.
 *
 * Formula: est = cᵀβ, se = √(cᵀVc), limits est ± crit·se, p = 2·P(T > |est/se|) with T
 * normal (GLMs) or t on the residual df (linear models); for ratios the estimate and
 * limits are exponentiated (the se and p stay on the log scale).
 *
 * @example linearContrastInterval(beta, V, [0, 1, 0, 1], { critical: 1.96, df: Infinity }, 'ratio')
 *   // the intervention's ratio at the second modifier level: exp(b1 + b3)
 */
export function linearContrastInterval(
  coefficients: ArrayLike<number>,
  covariance: ArrayLike<number>,
  contrast: ArrayLike<number>,
  reference: WaldReference,
  scale: EffectScale,
): EffectInterval {
  const p = coefficients.length;
  let estimate = 0;
  for (let j = 0; j < p; j++) estimate += contrast[j] * coefficients[j];
  const variance = quadraticForm(contrast, covariance, p);
  const se = Math.sqrt(Math.max(variance, 0));
  const statistic = estimate / se;
  const p_ = Number.isFinite(reference.df) ? studentTTwoSidedP(statistic, reference.df) : normalTwoSidedP(statistic);
  const lower = estimate - reference.critical * se;
  const upper = estimate + reference.critical * se;
  if (scale === 'ratio') return { estimate: Math.exp(estimate), lower: Math.exp(lower), upper: Math.exp(upper), se, p: p_ };
  return { estimate, lower, upper, se, p: p_ };
}

/** A unit contrast vector of length p with ones at the given indices. */
export function indicatorContrast(p: number, ...indices: number[]): Float64Array {
  const contrast = new Float64Array(p);
  for (const index of indices) contrast[index] += 1;
  return contrast;
}
