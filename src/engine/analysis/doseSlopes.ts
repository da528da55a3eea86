import { indicatorContrast, linearContrastInterval } from '../measures/linearContrast.js';
import type { DoseBlock } from '../types.js';
import type { FittedAnalysis } from './fittedAnalysis.js';

/** Why RERI, AP, S and the joint table are not given for a continuous intervention (shown in the result). */
export const DOSE_ADDITIVE_NOTE =
  'The additive measures (RERI, AP, S and the joint table) do not apply to a continuous intervention: they compare four joint cells of two binary factors, ' +
  'and a dose has no "unexposed" cell. The slopes per unit of the intervention within each level, their differences and the omnibus test describe the modification instead.';

/**
 * Slopes of a continuous intervention (dose) within each level of a categorical modifier
 * (shared/design/methods.md, "Rates, doses, absolute effects": continuous intervention;
 * "Conditional effects" for a continuous modifier).
 *
 * Formula: in level m the slope is b_A + b_{A·m} (b_A alone in the reference level), with
 * Var = V_AA + 2V_{A,Am} + V_{Am,Am}; the difference from the reference level is b_{A·m}.
 * Wald limits est ± crit·se with crit from the normal distribution (GLMs) or t on the
 * residual df (linear models), on the linear-predictor scale. Matches hand-written R:
 * sum(coef(fit)[c(a, am)]) and sqrt(v[a,a] + 2 v[a,am] + v[am,am]) with v = vcov(fit).
 *
 * @example an ordinary linear model, levels 0/1/2: slopes b_A, b_A + b_{A·1}, b_A + b_{A·2}.
 */
export function doseSlopes(analysis: FittedAnalysis): DoseBlock | null {
  const { frame, design, fit, reference, p } = analysis;
  if (frame.exposureValues === null || frame.modifier.kind !== 'categorical') return null;
  const { coefficients, covariance } = fit;
  const levels = frame.modifier.levels;
  const a = design.exposureIndex;
  const slopes = levels.map((level, k) => {
    const contrast = indicatorContrast(p, a, ...(k > 0 ? [design.productIndices[k - 1]] : []));
    return { level, ...linearContrastInterval(coefficients, covariance, contrast, reference, 'difference') };
  });
  const differences = levels.slice(1).map((level, k) => ({
    level,
    ...linearContrastInterval(coefficients, covariance, indicatorContrast(p, design.productIndices[k]), reference, 'difference'),
  }));
  const scale = fit.link === 'logit' ? 'log-odds' : fit.link === 'log' ? 'log-risk' : 'identity';
  return { scale, slopes, differences, interval: Number.isFinite(reference.df) ? 't' : 'z' };
}
