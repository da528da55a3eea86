import { normalQuantile } from '../distributions/normal.js';
import { studentTQuantile } from '../distributions/studentT.js';
import { johnsonNeyman } from '../measures/johnsonNeyman.js';
import { modifierSpread } from '../measures/modifierSpread.js';
import { significanceBand } from '../measures/significanceBand.js';
import { quantileType7, simpleSlopes, type SlopePoint } from '../measures/simpleSlopes.js';
import type { AnalysisResult } from '../types.js';
import type { FittedAnalysis } from './fittedAnalysis.js';
import { ordinal } from './pointLabels.js';

/** Simple slopes, Johnson-Neyman boundaries and band data of a continuous modifier. */
export interface ContinuousModifierResults {
  slopes: NonNullable<AnalysisResult['slopes']>;
  johnsonNeyman: NonNullable<AnalysisResult['johnsonNeyman']>;
  band: NonNullable<AnalysisResult['band']>;
  spread: NonNullable<AnalysisResult['spread']>;
}


/** Continuous modifiers only: the intervention's effect at chosen modifier values, where it is significant, and the band. */
export function continuousModifierStage(analysis: FittedAnalysis): ContinuousModifierResults {
  const { spec, checked, design, fit, summary, reference, scale, ratio, p } = analysis;
  const { coefficients, covariance } = fit;
  const product = design.productIndices[0];
  const mean = summary.mean as number;
  const sd = summary.sd as number;
  const requested = spec.modifier.slopesAt ?? { kind: 'sd' };
  const points: SlopePoint[] =
    requested.kind === 'sd'
      ? [
          { label: 'mean − 1 SD', at: mean - sd },
          { label: 'mean', at: mean },
          { label: 'mean + 1 SD', at: mean + sd },
        ]
      : requested.kind === 'percentiles'
        ? requested.percentiles.map((percentile) => ({ label: `${ordinal(percentile)} percentile`, at: quantileType7(summary.sorted as Float64Array, percentile / 100) }))
        : requested.values.map((value, index) => ({ label: requested.names?.[index]?.trim() || `at ${value}`, at: value }));
  const slopes = simpleSlopes(coefficients, covariance, design.exposureIndex, product, summary.centre, points, reference, scale);
  const jnCritical = ratio ? normalQuantile(1 - checked.alpha / 2) : studentTQuantile(1 - checked.alpha / 2, fit.residualDf);
  const a = design.exposureIndex;
  const boundaries = johnsonNeyman(
    { b1: coefficients[a], b3: coefficients[product], v11: covariance[a * p + a], v13: covariance[a * p + product], v33: covariance[product * p + product] },
    jnCritical,
    summary.observed as [number, number],
    summary.centre,
  );
  const band = significanceBand(coefficients, covariance, a, product, summary.centre, summary.observed as [number, number], reference, scale);
  return { slopes, johnsonNeyman: boundaries, band, spread: modifierSpread(summary.sorted as Float64Array) };
}
