/**
 * E-values (VanderWeele and Ding, Ann Intern Med 2017;167:268-274; methods.md, "Rates,
 * doses, absolute effects"): the minimum strength of association, on the risk-ratio scale,
 * that an unmeasured confounder would need with both the intervention and the outcome,
 * beyond the measured covariates, to fully explain away an observed risk ratio.
 */

/**
 * E-value of a risk ratio: RR + sqrt(RR·(RR − 1)) for RR ≥ 1; a ratio below 1 is first
 * inverted (1/RR). NaN for a non-positive or non-finite ratio.
 *
 * @example eValueOfRiskRatio(3.9) // 3.9 + sqrt(3.9 · 2.9) ≈ 7.26
 */
export function eValueOfRiskRatio(ratio: number): number {
  if (!(ratio > 0) || !Number.isFinite(ratio)) return Number.NaN;
  const rr = ratio < 1 ? 1 / ratio : ratio;
  return rr + Math.sqrt(rr * (rr - 1));
}

/**
 * E-value of an interval: that of the limit nearer 1, or 1 when the interval includes 1
 * (no confounding is needed to move it to the null).
 */
export function eValueOfInterval(lower: number, upper: number): number {
  if (!(lower > 0) || !(upper > 0)) return Number.NaN;
  if (lower <= 1 && upper >= 1) return 1;
  return eValueOfRiskRatio(lower > 1 ? lower : upper);
}

/** How an odds ratio is brought to the risk-ratio scale before its E-value. */
export type OddsRatioConversion = 'none' | 'square-root' | 'rare-outcome';

/**
 * An odds ratio approximates a risk ratio only for a rare outcome; for a common outcome
 * (proportion above `commonAbove`, 0.15 in the paper) sqrt(OR) approximates the risk ratio.
 * Risk ratios and rate ratios pass unchanged ('none').
 */
export function riskRatioScale(value: number, conversion: OddsRatioConversion): number {
  return conversion === 'square-root' ? Math.sqrt(value) : value;
}
