import { eValueOfInterval, eValueOfRiskRatio, riskRatioScale, type OddsRatioConversion } from '../measures/eValue.js';
import type { EValueEntry, EValues, StratumEffect } from '../types.js';
import type { FittedAnalysis } from './fittedAnalysis.js';

/**
 * Above this outcome proportion an odds ratio is square-rooted before its E-value
 * (VanderWeele and Ding, Ann Intern Med 2017;167:268-274: "common", over 15 %).
 */
export const COMMON_OUTCOME_FOR_E_VALUE = 0.15;

/**
 * E-values of every stratum effect (the intervention's ratio within each modifier level)
 * and of the limit of its interval nearer 1 (methods.md, "Rates, doses, absolute
 * effects"). Risk ratios (log-binomial, modified Poisson) and rate ratios are used as they
 * are; odds ratios are square-rooted when the outcome is common within that level (the
 * proportion with the event among the level's analysed rows, both arms, above 15 %) and
 * otherwise read as risk ratios. Null for differences (linear models).
 */
export function eValueStage(analysis: FittedAnalysis, strata: readonly StratumEffect[]): EValues | null {
  const { fit, ratio, frame } = analysis;
  if (!ratio || strata.length === 0) return null;
  const odds = fit.link === 'logit';
  const entries: EValueEntry[] = strata.map((stratum) => {
    const prevalence = frame.outcomeBinary && stratum.events !== null && stratum.n > 0 ? stratum.events / stratum.n : null;
    const conversion: OddsRatioConversion = !odds ? 'none' : prevalence !== null && prevalence > COMMON_OUTCOME_FOR_E_VALUE ? 'square-root' : 'rare-outcome';
    const { estimate, lower, upper } = stratum.effect;
    const scaled = (value: number | null) => (value === null ? Number.NaN : riskRatioScale(value, conversion));
    return {
      level: stratum.level,
      ratio: odds ? 'odds ratio' : frame.outcomeBinary ? 'risk ratio' : 'rate ratio',
      conversion,
      prevalence,
      estimate: eValueOfRiskRatio(scaled(estimate)),
      limit: eValueOfInterval(scaled(lower), scaled(upper)),
    };
  });
  return { commonAbove: COMMON_OUTCOME_FOR_E_VALUE, prevalenceBasis: 'stratum', entries };
}
