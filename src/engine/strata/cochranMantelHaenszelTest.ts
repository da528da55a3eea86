import { chiSquareUpperTail } from '../distributions/chiSquare.js';
import type { TestResult } from '../types.js';
import type { TwoByTwoCounts } from './twoByTwoTable.js';

/**
 * Cochran-Mantel-Haenszel test of conditional independence in K 2 × 2 tables (Mantel and
 * Haenszel 1959), with the continuity correction.
 *
 * Formula: X² = (|Σ(a − E a)| − ½)² / Σ Var a, E a = n1·m1/N,
 * Var a = n1·n0·m1·m0/(N²(N − 1)); df = 1. The ½ is applied only when |Σ(a − E a)| ≥ ½,
 * as in R's mantelhaen.test(correct = TRUE). Strata with N < 2 carry no information and
 * are skipped.
 *
 * @example statsmodels' TestStratified2 tables: X² = 11.8852, p = 0.0005658.
 */
export function cochranMantelHaenszelTest(tables: readonly TwoByTwoCounts[], continuityCorrection = true): TestResult {
  let difference = 0;
  let variance = 0;
  for (const { a, b, c, d } of tables) {
    const total = a + b + c + d;
    if (total < 2) continue;
    const exposed = a + b;
    const unexposed = c + d;
    const events = a + c;
    const nonEvents = b + d;
    difference += a - (exposed * events) / total;
    variance += (exposed * unexposed * events * nonEvents) / (total * total * (total - 1));
  }
  if (!(variance > 0)) return { statistic: null, df: 1, p: null };
  const correction = continuityCorrection && Math.abs(difference) >= 0.5 ? 0.5 : 0;
  const statistic = (Math.abs(difference) - correction) ** 2 / variance;
  return { statistic, df: 1, p: chiSquareUpperTail(statistic, 1) };
}
