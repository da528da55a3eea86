import { chiSquareUpperTail } from '../distributions/chiSquare.js';
import { studentTQuantile } from '../distributions/studentT.js';
import { buildDesignMatrix } from '../design/designMatrix.js';
import { designWithoutProducts } from '../design/designWithoutProducts.js';
import { InvalidSpecError } from '../errors.js';
import { fitModel } from '../fit/fitModel.js';
import { indicatorContrast, linearContrastInterval } from '../measures/linearContrast.js';
import type { TrendBlock } from '../types.js';
import type { FittedAnalysis } from './fittedAnalysis.js';

/**
 * Test for trend in the intervention's effect across the levels of an ordered modifier
 * (shared/design/methods.md, "Rates, doses, absolute effects": "Trend across ordered
 * modifier levels: a single product term of the intervention with the level scores; its
 * Wald or LR test").
 *
 * Model: g(μ) = b0 + b_A·A + Σ b_m·1[M = m] + b_T·A·s(M) + covariates, with s the level
 * scores carried in the spec; b_T is the change in the intervention's effect (link scale)
 * per unit of score. It is fitted with s(M) − s(reference level), which leaves b_T, its
 * variance and the likelihood unchanged (A is in the model). Reported: b_T with Wald limits
 * (normal for GLMs, t for linear models), the Wald test (z², or t² on 1 and the residual
 * df), and for logistic and log-binomial fits the likelihood-ratio test against the model
 * without product terms. Matches R: glm(y ~ A + factor(M) + I(A * s) + ..., family, control
 * = glm.control(epsilon = 1e-14, maxit = 100)), coef/vcov of the I(A * s) term, and
 * anova(reduced, trend, test = "LRT").
 *
 * @throws InvalidSpecError when a level of the modifier has no score.
 */
export function trendTest(analysis: FittedAnalysis): TrendBlock | null {
  const { spec, checked, frame, fit, pool, reference } = analysis;
  const ordered = spec.modifier.ordered;
  if (ordered === undefined || frame.modifier.kind !== 'categorical') return null;
  const { levels, column } = frame.modifier;
  const given = levels.map((level) => {
    const score = Object.prototype.hasOwnProperty.call(ordered.scores, level) ? ordered.scores[level] : undefined;
    if (score === undefined || !Number.isFinite(score)) {
      throw new InvalidSpecError(`The ordered modifier "${column}" has no score for its level "${level}" (modifier.ordered.scores).`, { column, level });
    }
    return score;
  });
  if (given.every((score) => score === given[0])) throw new InvalidSpecError(`The scores of the ordered modifier "${column}" are all equal.`, { column });
  const shifted = Float64Array.from(given, (score) => score - given[0]);
  const design = buildDesignMatrix(frame, { includeProducts: true, centre: 0, trendScores: shifted });
  const trend = fitModel(design, frame.outcome, fit.family, { standardErrors: checked.standardErrors, parallel: pool });
  const term = design.productIndices[0];
  const critical = Number.isFinite(trend.waldDf) ? studentTQuantile(analysis.tail, trend.residualDf) : reference.critical;
  const wald = linearContrastInterval(trend.coefficients, trend.covariance, indicatorContrast(design.columns, term), { critical, df: trend.waldDf }, 'difference');
  const z = wald.estimate === null || wald.se === null ? null : wald.estimate / wald.se;
  let likelihoodRatio: TrendBlock['likelihoodRatio'] = null;
  if (trend.family === 'logistic' || trend.family === 'log-binomial') {
    const reduced = fitModel(designWithoutProducts(frame, design), frame.outcome, trend.family, { parallel: pool });
    if (reduced.family === trend.family) {
      const statistic = Math.max(0, 2 * (trend.logLik - reduced.logLik));
      likelihoodRatio = { statistic, df: 1, p: chiSquareUpperTail(statistic, 1) };
    }
  }
  const ratio = analysis.ratio && wald.estimate !== null && wald.lower !== null && wald.upper !== null
    ? { estimate: Math.exp(wald.estimate), lower: Math.exp(wald.lower), upper: Math.exp(wald.upper) }
    : null;
  return {
    scores: levels.map((level, k) => ({ level, score: given[k] })),
    term: design.terms[term].name,
    estimate: wald.estimate,
    se: wald.se,
    lower: wald.lower,
    upper: wald.upper,
    ratio,
    wald: { statistic: z === null ? null : z * z, df: 1, p: wald.p },
    likelihoodRatio,
  };
}
