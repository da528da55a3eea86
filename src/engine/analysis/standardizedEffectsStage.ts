import { normalTwoSidedP } from '../distributions/normal.js';
import { studentTTwoSidedP } from '../distributions/studentT.js';
import { numberNeeded } from '../measures/numberNeededToTreat.js';
import { deltaStandardError, standardizedGroup, type StandardizedGroup } from '../measures/standardizedRisks.js';
import type { EffectInterval, StandardizedEffects, StandardizedLevel, StandardizedRisk } from '../types.js';
import type { FittedAnalysis } from './fittedAnalysis.js';

/**
 * Standardized absolute effects per level of a categorical modifier (methods.md, "Rates,
 * doses, absolute effects"; g-formula, Robins 1986): within each level m, the mean of the
 * model's predicted risks over the rows with modifier = m with the intervention set to the
 * reference arm and to the other arm; RD(m) = r₁ − r₀ with a delta-method interval
 * (gradient mean(μ'·x_i(1)) − mean(μ'·x_i(0)), variance gᵀVg with the fit's own
 * covariance V: model-based or robust, whichever the fit uses for every measure); NNT =
 * 1/|RD| to treat or to harm (Altman, BMJ 1998;317:1309); and the interaction contrast
 * IC(m) = RD(m) − RD(ref), whose gradient is the difference of the two RD gradients (the
 * rows of m and ref are disjoint but share the coefficients, so V carries their covariance).
 *
 * Null unless the specification asks for it (validateSpec refuses it for a non-binary
 * outcome or a continuous modifier).
 */
export function standardizedEffectsStage(analysis: FittedAnalysis): StandardizedEffects | null {
  const { spec, frame, design, fit, reference, p, warnings } = analysis;
  if (spec.standardize !== true || frame.modifier.kind !== 'categorical' || !frame.outcomeBinary) return null;
  const { codes, levels, column } = frame.modifier;
  const { coefficients, covariance } = fit;
  const wald = (estimate: number, gradient: ArrayLike<number>): EffectInterval => {
    const se = deltaStandardError(gradient, covariance, p);
    const statistic = estimate / se;
    const pValue = Number.isFinite(reference.df) ? studentTTwoSidedP(statistic, reference.df) : normalTwoSidedP(statistic);
    return { estimate, lower: estimate - reference.critical * se, upper: estimate + reference.critical * se, se, p: pValue };
  };
  const risk = (group: StandardizedGroup, arm: 0 | 1): StandardizedRisk => {
    const { estimate, lower, upper, se } = wald(group.risk[arm], group.gradient[arm]);
    return { estimate, lower, upper, se };
  };
  const differenceGradient = (group: StandardizedGroup): Float64Array => group.gradient[1].map((value, j) => value - group.gradient[0][j]);

  const groups = levels.map((_, k) => standardizedGroup(design, coefficients, fit.link, (i) => codes[i] === k));
  const referenceGradient = differenceGradient(groups[0]);
  const referenceDifference = groups[0].risk[1] - groups[0].risk[0];
  const entries: StandardizedLevel[] = groups.map((group, k) => {
    const gradient = differenceGradient(group);
    const difference = group.risk[1] - group.risk[0];
    const riskDifference = wald(difference, gradient);
    return {
      level: levels[k],
      n: group.rows,
      riskUnexposed: risk(group, 0),
      riskExposed: risk(group, 1),
      riskDifference,
      nnt: numberNeeded(riskDifference.estimate, riskDifference.lower, riskDifference.upper),
      interactionContrast: k === 0 ? null : wald(difference - referenceDifference, gradient.map((value, j) => value - referenceGradient[j])),
    };
  });
  const above = groups.findIndex((group) => group.maxPrediction > 1);
  if (above >= 0) {
    warnings.push({
      code: 'STANDARDIZED_RISK_ABOVE_ONE',
      message: `Some predicted risks with the intervention set to one arm exceed 1 under the ${fit.link} link (first at ${column}=${levels[above]}), so the standardized risks there are not proper risks; a logistic model keeps them between 0 and 1.`,
      column,
      level: levels[above],
    });
  }
  return { method: 'standardized-delta', variance: fit.standardErrors, reference: levels[0], levels: entries };
}
