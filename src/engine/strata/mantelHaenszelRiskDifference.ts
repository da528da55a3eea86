import type { TwoByTwoCounts } from './twoByTwoTable.js';

export interface PooledDifference {
  readonly estimate: number;
  readonly se: number;
  readonly lower: number;
  readonly upper: number;
}

/**
 * Mantel-Haenszel pooled risk difference (Greenland and Robins, Biometrics 1985;41:55-68)
 * with Sato's variance, consistent in both sparse-data and large-strata limits (Sato,
 * Biometrics 1989;45:1323-1324).
 *
 * Formula: with n1 = a + b, n0 = c + d, N = n1 + n0 and weights W = n1·n0/N:
 * RD = Σ(a·n0 − c·n1)/N / ΣW;
 * Var(RD) = (RD·ΣP + ΣQ)/(ΣW)², P = (n1²·c − n0²·a + n1·n0·(n0 − n1)/2)/N²,
 * Q = (a·(n0 − c) + c·(n1 − a))/(2N). Limits RD ± z·se. (For one stratum with n1 = n0 the
 * variance reduces to p1(1 − p1)/n1 + p0(1 − p0)/n0.) Returns null when ΣW = 0.
 *
 * @example one stratum a = 20, b = 80, c = 10, d = 90 → RD = 0.1.
 */
export function mantelHaenszelRiskDifference(tables: readonly TwoByTwoCounts[], critical: number): PooledDifference | null {
  let numerator = 0;
  let weightSum = 0;
  let sumP = 0;
  let sumQ = 0;
  for (const { a, b, c, d } of tables) {
    const exposed = a + b;
    const unexposed = c + d;
    const total = exposed + unexposed;
    if (total === 0) continue;
    numerator += (a * unexposed - c * exposed) / total;
    weightSum += (exposed * unexposed) / total;
    sumP += (exposed * exposed * c - unexposed * unexposed * a + (exposed * unexposed * (unexposed - exposed)) / 2) / (total * total);
    sumQ += (a * (unexposed - c) + c * (exposed - a)) / (2 * total);
  }
  if (weightSum === 0) return null;
  const estimate = numerator / weightSum;
  const se = Math.sqrt(Math.max(0, (estimate * sumP + sumQ) / (weightSum * weightSum)));
  return { estimate, se, lower: estimate - critical * se, upper: estimate + critical * se };
}
