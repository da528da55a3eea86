import { CLUSTER_ROBUST_NAME } from '../fit/clusterRobustVariance.js';
import { linearPredictor } from '../fit/crossProductAccumulator.js';
import type { AnalysisResult, RatesBlock } from '../types.js';
import type { FittedAnalysis } from './fittedAnalysis.js';

/** Fewer clusters than this earn a warning (common practice: CR1 is unreliable with few clusters). */
export const FEW_CLUSTERS = 30;
/** Pearson χ²/(n − p) above this earns the overdispersion warning (common practice). */
export const OVERDISPERSED = 1.5;
/** Rates are given per this many person-time units. */
export const RATE_PER = 1000;

function ratesBlock(analysis: FittedAnalysis, unit: string | null): RatesBlock {
  const { frame, design, fit, spec } = analysis;
  const personTime = frame.extras?.personTime ?? null;
  // Overdispersion: Pearson χ² = Σ (y − μ̂)²/μ̂ over the rows, on n − p degrees of freedom
  // (McCullagh and Nelder 1989, §6.2; in R: sum(residuals(fit, "pearson")^2) / df.residual(fit)).
  const eta = linearPredictor(design, fit.coefficients);
  let pearson = 0;
  for (let i = 0; i < frame.n; i++) {
    const mean = Math.exp(eta[i]);
    const residual = frame.outcome[i] - mean;
    pearson += (residual * residual) / mean;
  }
  const df = frame.n - design.columns;
  const cells: RatesBlock['cells'] = [];
  if (personTime !== null) {
    const modifier = frame.modifier.kind === 'categorical' ? frame.modifier : null;
    const levels = modifier === null ? 1 : modifier.levels.length;
    const events = new Float64Array(2 * levels);
    const time = new Float64Array(2 * levels);
    for (let i = 0; i < frame.n; i++) {
      const cell = 2 * (modifier === null ? 0 : modifier.codes[i]) + frame.exposure[i];
      events[cell] += frame.outcome[i];
      time[cell] += personTime[i];
    }
    for (let level = 0; level < levels; level++) {
      for (const arm of [0, 1]) {
        const cell = 2 * level + arm;
        cells.push({
          exposure: frame.exposureLevels[arm],
          modifier: modifier === null ? null : modifier.levels[level],
          events: events[cell],
          personTime: time[cell],
          ratePer1000: (RATE_PER * events[cell]) / time[cell],
        });
      }
    }
  }
  return {
    personTimeColumn: spec.outcome.personTime ?? null,
    unit: personTime === null ? null : unit,
    per: RATE_PER,
    cells,
    overdispersion: { pearsonChiSquare: pearson, df, ratio: pearson / df },
  };
}

/**
 * The result's blocks for clustered rows (the variance's name, the number of clusters),
 * count outcomes (crude rates per 1,000 person-time units, the overdispersion check) and
 * frequency weights, with their warnings (fewer than 30 clusters; Pearson χ²/df above 1.5
 * under the model-based variance).
 */
export function clusterRateWeightStage(
  analysis: FittedAnalysis,
  personTimeUnit: string | null,
): Pick<AnalysisResult, 'clustering' | 'rates' | 'weights'> {
  const { frame, fit, warnings } = analysis;
  const cluster = frame.extras?.cluster ?? null;
  let clustering: AnalysisResult['clustering'] = null;
  if (cluster !== null) {
    const sizes = new Float64Array(cluster.count);
    for (let i = 0; i < cluster.codes.length; i++) sizes[cluster.codes[i]]++;
    let smallest = Infinity;
    let largest = 0;
    for (const size of sizes) {
      if (size < smallest) smallest = size;
      if (size > largest) largest = size;
    }
    clustering = { column: cluster.column, method: CLUSTER_ROBUST_NAME, clusters: cluster.count, smallestCluster: smallest, largestCluster: largest };
    if (cluster.count < FEW_CLUSTERS) {
      warnings.push({
        code: 'FEW_CLUSTERS',
        message: `Only ${cluster.count} clusters in "${cluster.column}": with fewer than ${FEW_CLUSTERS} the cluster-robust standard errors tend to be too small and intervals too narrow (common practice).`,
        column: cluster.column,
      });
    }
  }
  let rates: RatesBlock | null = null;
  if (fit.family === 'poisson') {
    rates = ratesBlock(analysis, personTimeUnit);
    const ratio = rates.overdispersion.ratio;
    if (fit.standardErrors === 'model' && ratio !== null && ratio > OVERDISPERSED) {
      warnings.push({
        code: 'OVERDISPERSION',
        message: `The counts vary more than the Poisson model allows (Pearson χ²/df = ${ratio.toFixed(2)}), so its model-based intervals are too narrow; use robust standard errors or a cluster column.`,
      });
    }
  }
  return { clustering, rates, weights: analysis.weights };
}
