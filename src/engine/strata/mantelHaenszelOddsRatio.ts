import type { TwoByTwoCounts } from './twoByTwoTable.js';

export interface PooledRatio {
  readonly estimate: number;
  /** Standard error of the log estimate. */
  readonly logSe: number;
  readonly lower: number;
  readonly upper: number;
}

/**
 * Mantel-Haenszel pooled odds ratio (Mantel and Haenszel, J Natl Cancer Inst
 * 1959;22:719-748) with the Robins-Breslow-Greenland variance of its log (Robins, Breslow
 * and Greenland, Biometrics 1986;42:311-323).
 *
 * Formula: OR = ΣR/ΣS with R = ad/n, S = bc/n; with P = (a + d)/n, Q = (b + c)/n,
 * Var(ln OR) = ΣPR/(2(ΣR)²) + Σ(PS + QR)/(2ΣRΣS) + ΣQS/(2(ΣS)²). Limits exp(ln OR ± z·se).
 * Matches the estimate and interval of R's mantelhaen.test for 2 × 2 × K tables.
 * Strata with n = 0 are skipped. Returns null when ΣR or ΣS is 0.
 *
 * @example statsmodels' TestStratified2 tables give OR = 3.5912, 95% CI (1.781135, 7.240633).
 */
export function mantelHaenszelOddsRatio(tables: readonly TwoByTwoCounts[], critical: number): PooledRatio | null {
  let sumR = 0;
  let sumS = 0;
  let sumPR = 0;
  let sumPSQR = 0;
  let sumQS = 0;
  for (const { a, b, c, d } of tables) {
    const n = a + b + c + d;
    if (n === 0) continue;
    const r = (a * d) / n;
    const s = (b * c) / n;
    const pValue = (a + d) / n;
    const q = (b + c) / n;
    sumR += r;
    sumS += s;
    sumPR += pValue * r;
    sumPSQR += pValue * s + q * r;
    sumQS += q * s;
  }
  if (sumR === 0 || sumS === 0) return null;
  const log = Math.log(sumR / sumS);
  const variance = sumPR / (2 * sumR * sumR) + sumPSQR / (2 * sumR * sumS) + sumQS / (2 * sumS * sumS);
  const logSe = Math.sqrt(variance);
  return { estimate: Math.exp(log), logSe, lower: Math.exp(log - critical * logSe), upper: Math.exp(log + critical * logSe) };
}
