import { quadraticForm } from '../core/symmetricPositiveDefinite.js';
import type { PredictionsBlock } from '../types.js';
import type { FittedAnalysis } from './fittedAnalysis.js';

/** Points across a continuous modifier's observed range. */
const GRID_POINTS = 41;

function inverseLink(link: FittedAnalysis['fit']['link'], eta: number): number {
  if (link === 'logit') return 1 / (1 + Math.exp(-eta));
  if (link === 'log') return Math.exp(eta);
  return eta;
}

/**
 * The model's predicted outcome for the profile plot and its predicted lines, at stated
 * covariate values (common practice; the conditional effects of methods.md's "Conditional
 * effects" are the gaps between these lines on the link scale): continuous
 * covariates at their mean over the analysed rows, categorical covariates at their most
 * common level (the first in level order on a tie). One line per arm (a binary
 * intervention) or at the dose's mean − 1 SD, mean and mean + 1 SD (a continuous one);
 * points at each modifier level, or at 41 values across a continuous modifier's observed
 * range. Each point gives η = xᵀβ, se = √(xᵀVx) with V the covariance the measures use,
 * and η ± crit·se mapped through the inverse link. Matches R's predict(fit, newdata, type =
 * "link", se.fit = TRUE) with newdata at those covariate values.
 */
export function profilePredictions(analysis: FittedAnalysis): PredictionsBlock {
  const { frame, design, fit, summary, critical, p } = analysis;
  const { coefficients, covariance } = fit;
  const base = new Float64Array(p);
  base[0] = 1;
  const covariates: PredictionsBlock['covariates'] = frame.covariates.map((covariate) => {
    if (covariate.kind === 'continuous') {
      let sum = 0;
      for (let i = 0; i < covariate.values.length; i++) sum += covariate.values[i];
      const mean = sum / covariate.values.length;
      const index = design.terms.findIndex((term) => term.role === 'covariate' && term.column === covariate.column);
      base[index] = mean;
      return { column: covariate.column, held: 'mean', value: mean, level: null };
    }
    let common = 0;
    for (let k = 1; k < covariate.counts.length; k++) if (covariate.counts[k] > covariate.counts[common]) common = k;
    const level = covariate.levels[common];
    const index = design.terms.findIndex((term) => term.role === 'covariate' && term.column === covariate.column && term.level === level);
    if (index >= 0) base[index] = 1;
    return { column: covariate.column, held: 'most-common', value: null, level };
  });

  const name = frame.exposureColumn;
  const dose = frame.exposureValues;
  let lines: { label: string; exposure: number }[];
  if (dose === null) {
    lines = [
      { label: `${name} = ${frame.exposureLevels[0]}`, exposure: 0 },
      { label: `${name} = ${frame.exposureLevels[1]}`, exposure: 1 },
    ];
  } else {
    let sum = 0;
    for (let i = 0; i < dose.length; i++) sum += dose[i];
    const mean = sum / dose.length;
    let squares = 0;
    for (let i = 0; i < dose.length; i++) squares += (dose[i] - mean) ** 2;
    const sd = Math.sqrt(squares / (dose.length - 1));
    lines = [
      { label: `${name} at mean − 1 SD`, exposure: mean - sd },
      { label: `${name} at mean`, exposure: mean },
      { label: `${name} at mean + 1 SD`, exposure: mean + sd },
    ];
  }

  const modifier = frame.modifier;
  const observed = summary.observed;
  const places: { level: string | null; x: number | null; terms: number[] }[] =
    modifier.kind === 'categorical'
      ? modifier.levels.map((level, k) => ({ level, x: null, terms: k === 0 ? [] : [k - 1] }))
      : Array.from({ length: GRID_POINTS }, (_, k) => {
          const [low, high] = observed as [number, number];
          return { level: null, x: low + ((high - low) * k) / (GRID_POINTS - 1), terms: [0] };
        });
  const row = new Float64Array(p);
  const a = design.exposureIndex;
  return {
    method: 'typical-values',
    covariates,
    lines: lines.map(({ label, exposure }) => ({
      label,
      exposure,
      points: places.map(({ level, x, terms }) => {
        row.set(base);
        row[a] = exposure;
        for (const k of terms) {
          const value = x === null ? 1 : x - summary.centre;
          row[design.modifierIndices[k]] = value;
          if (design.productIndices.length > k) row[design.productIndices[k]] = exposure * value;
        }
        let eta = 0;
        for (let j = 0; j < p; j++) eta += row[j] * coefficients[j];
        const se = Math.sqrt(Math.max(quadraticForm(row, covariance, p), 0));
        return {
          level,
          x,
          linearPredictor: eta,
          se,
          estimate: inverseLink(fit.link, eta),
          lower: inverseLink(fit.link, eta - critical * se),
          upper: inverseLink(fit.link, eta + critical * se),
        };
      }),
    })),
  };
}
