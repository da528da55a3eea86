import { quantileType7 } from '../measures/simpleSlopes.js';

/**
 * Percentile bootstrap interval (Efron and Tibshirani 1993, §13.3): the α/2 and 1 − α/2
 * quantiles of the finite replicate values, by R's quantile type 7. Null when fewer than
 * 10 replicate values are finite.
 */
export function percentileInterval(values: Float64Array, level: number): { lower: number; upper: number } | null {
  const finite = values.filter((value) => Number.isFinite(value)).sort();
  if (finite.length < 10) return null;
  const tail = (1 - level) / 2;
  return { lower: quantileType7(finite, tail), upper: quantileType7(finite, 1 - tail) };
}
