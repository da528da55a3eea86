import type { TwoByTwoCounts } from './twoByTwoTable.js';

/** The pooled difference's interval under one published variance. */
export interface RiskDifferenceVariance {
  readonly variance: 'sato' | 'greenland-robins';
  /** The variance's source as shown beside the figure. */
  readonly label: string;
  readonly se: number;
  readonly lower: number;
  readonly upper: number;
}

export interface PooledDifference {
  readonly estimate: number;
  /** Sato's variance (the default limits). */
  readonly se: number;
  readonly lower: number;
  readonly upper: number;
  /** Both published variances, each labelled: Sato (1989) first, then Greenland-Robins (1985). */
  readonly variances: readonly [RiskDifferenceVariance, RiskDifferenceVariance];
}

export const SATO_LABEL = 'Sato (1989) variance';
export const GREENLAND_ROBINS_LABEL = 'Greenland-Robins (1985) variance';

/**
 * Mantel-Haenszel pooled risk difference (Greenland and Robins, Biometrics 1985;41:55-68)
 * with its two published variances.
 *
 * Formula: with n1 = a + b, n0 = c + d, N = n1 + n0 and weights W = n1·n0/N:
 * RD = Σ(a·n0 − c·n1)/N / ΣW.
 * Sato (Biometrics 1989;45:1323-1324), consistent in both sparse-data and large-strata
 * limits: Var(RD) = (RD·ΣP + ΣQ)/(ΣW)², P = (n1²·c − n0²·a + n1·n0·(n0 − n1)/2)/N²,
 * Q = (a·(n0 − c) + c·(n1 − a))/(2N).
 * Greenland-Robins (1985), consistent in large strata: Var(RD) = Σ W²·(a·b/n1³ + c·d/n0³) /
 * (ΣW)², i.e. Σ(a·b·n0³ + c·d·n1³)/(n1·n0·N²) / (ΣW)².
 * Limits RD ± z·se under each. (For one stratum the Greenland-Robins variance is
 * p1(1 − p1)/n1 + p0(1 − p0)/n0, and so is Sato's when n1 = n0.) Strata with n1 = 0 or
 * n0 = 0 carry no weight and are skipped. Returns null when ΣW = 0. Checked against the
 * same formulas written in base R (tests/reference/r/make-fixtures.R, mh_block).
 *
 * @example one stratum a = 20, b = 80, c = 10, d = 90 → RD = 0.1, both se = √(0.0016 + 0.0009)/10 = 0.05.
 */
export function mantelHaenszelRiskDifference(tables: readonly TwoByTwoCounts[], critical: number): PooledDifference | null {
  let numerator = 0;
  let weightSum = 0;
  let sumP = 0;
  let sumQ = 0;
  let sumGreenlandRobins = 0;
  for (const { a, b, c, d } of tables) {
    const exposed = a + b;
    const unexposed = c + d;
    const total = exposed + unexposed;
    if (exposed === 0 || unexposed === 0) continue;
    numerator += (a * unexposed - c * exposed) / total;
    weightSum += (exposed * unexposed) / total;
    sumP += (exposed * exposed * c - unexposed * unexposed * a + (exposed * unexposed * (unexposed - exposed)) / 2) / (total * total);
    sumQ += (a * (unexposed - c) + c * (exposed - a)) / (2 * total);
    sumGreenlandRobins += (a * b * unexposed ** 3 + c * d * exposed ** 3) / (exposed * unexposed * total * total);
  }
  if (weightSum === 0) return null;
  const estimate = numerator / weightSum;
  const interval = (variance: RiskDifferenceVariance['variance'], label: string, value: number): RiskDifferenceVariance => {
    const se = Math.sqrt(Math.max(0, value));
    return { variance, label, se, lower: estimate - critical * se, upper: estimate + critical * se };
  };
  const sato = interval('sato', SATO_LABEL, (estimate * sumP + sumQ) / (weightSum * weightSum));
  const greenlandRobins = interval('greenland-robins', GREENLAND_ROBINS_LABEL, sumGreenlandRobins / (weightSum * weightSum));
  return { estimate, se: sato.se, lower: sato.lower, upper: sato.upper, variances: [sato, greenlandRobins] };
}
