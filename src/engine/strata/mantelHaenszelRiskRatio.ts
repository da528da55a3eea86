import type { PooledRatio } from './mantelHaenszelOddsRatio.js';
import type { TwoByTwoCounts } from './twoByTwoTable.js';

/**
 * Mantel-Haenszel pooled risk ratio with the Greenland-Robins variance of its log
 * (Greenland and Robins, Biometrics 1985;41:55-68), valid in sparse and large strata.
 *
 * Formula: with n1 = a + b, n0 = c + d, m1 = a + c, N = n1 + n0:
 * RR = Σ(a·n0/N) / Σ(c·n1/N); Var(ln RR) = Σ((n1·n0·m1 − a·c·N)/N²) / (Σ(a·n0/N)·Σ(c·n1/N)).
 * Limits exp(ln RR ± z·se). Returns null when either sum is 0.
 *
 * @example one stratum a = 20, b = 80, c = 10, d = 90 → RR = 2 (the crude RR).
 */
export function mantelHaenszelRiskRatio(tables: readonly TwoByTwoCounts[], critical: number): PooledRatio | null {
  let numerator = 0;
  let denominator = 0;
  let varianceNumerator = 0;
  for (const { a, b, c, d } of tables) {
    const exposed = a + b;
    const unexposed = c + d;
    const total = exposed + unexposed;
    if (total === 0) continue;
    numerator += (a * unexposed) / total;
    denominator += (c * exposed) / total;
    varianceNumerator += (exposed * unexposed * (a + c) - a * c * total) / (total * total);
  }
  if (numerator === 0 || denominator === 0) return null;
  const log = Math.log(numerator / denominator);
  const logSe = Math.sqrt(varianceNumerator / (numerator * denominator));
  return { estimate: Math.exp(log), logSe, lower: Math.exp(log - critical * logSe), upper: Math.exp(log + critical * logSe) };
}
