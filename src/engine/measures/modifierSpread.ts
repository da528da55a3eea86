import { quantileType7 } from './simpleSlopes.js';
import type { ModifierSpread } from '../types.js';

/** Number of equal-width bins the observed range is cut into. */
export const SPREAD_BINS = 10;

/**
 * Where a continuous modifier's values lie, so a reader can see where the data are thin:
 * the 5th and 95th percentiles (R's quantile type 7) and the counts in ten equal-width
 * bins over the observed range. A bin holds from ≤ x < to, the last one also x = to
 * (R: table(cut(x, seq(min, max, length.out = 11), right = FALSE, include.lowest = TRUE))).
 * With a single observed value, one bin holds every row.
 */
export function modifierSpread(sorted: Float64Array): ModifierSpread {
  const n = sorted.length;
  const min = sorted[0];
  const max = sorted[n - 1];
  const p5 = quantileType7(sorted, 0.05);
  const p95 = quantileType7(sorted, 0.95);
  if (!(max > min)) return { p5, p95, bins: [{ from: min, to: max, n }] };
  const edges = Array.from({ length: SPREAD_BINS + 1 }, (_, k) => (k === SPREAD_BINS ? max : min + ((max - min) * k) / SPREAD_BINS));
  const counts = new Array<number>(SPREAD_BINS).fill(0);
  let bin = 0;
  for (let i = 0; i < n; i++) {
    const x = sorted[i];
    while (bin < SPREAD_BINS - 1 && x >= edges[bin + 1]) bin++;
    counts[bin]++;
  }
  return { p5, p95, bins: counts.map((count, k) => ({ from: edges[k], to: edges[k + 1], n: count })) };
}
