import { chiSquareUpperTail } from '../distributions/chiSquare.js';
import type { TestResult } from '../types.js';
import type { TwoByTwoCounts } from './twoByTwoTable.js';

/**
 * Expected count of a under a common odds ratio ψ with the table's margins fixed: the
 * root in [max(0, m1 − n0), min(n1, m1)] of (1 − ψ)A² + (N − n1 − m1 + ψ(n1 + m1))A − ψ·n1·m1 = 0.
 */
function expectedUnderCommonOddsRatio(exposed: number, events: number, total: number, psi: number): number {
  const unexposed = total - exposed;
  const low = Math.max(0, events - unexposed);
  const high = Math.min(exposed, events);
  if (low === high) return low;
  const quadratic = 1 - psi;
  const linear = total - exposed - events + psi * (exposed + events);
  const constant = -psi * exposed * events;
  if (Math.abs(quadratic) < 1e-12) return -constant / linear;
  const discriminant = Math.sqrt(Math.max(0, linear * linear - 4 * quadratic * constant));
  const first = (-linear + discriminant) / (2 * quadratic);
  const second = (-linear - discriminant) / (2 * quadratic);
  const inside = (x: number) => x >= low - 1e-9 && x <= high + 1e-9;
  return inside(first) ? first : second;
}

export interface BreslowDayResult {
  readonly breslowDay: TestResult;
  readonly tarone: TestResult;
}

/**
 * Breslow-Day test of homogeneous odds ratios across K 2 × 2 tables (Breslow and Day,
 * Statistical Methods in Cancer Research I, IARC Sci Publ 32, 1980, §4.4), and the same
 * statistic with Tarone's correction (Tarone, Biometrika 1985;72:91-95).
 *
 * Formula: with ψ the Mantel-Haenszel OR, Ak the expected a of stratum k under ψ (margins
 * fixed) and Vk = 1/(1/Ak + 1/(n1 − Ak) + 1/(m1 − Ak) + 1/(N − n1 − m1 + Ak)):
 * X²_BD = Σ (ak − Ak)²/Vk; Tarone: X²_BD − (Σak − ΣAk)²/ΣVk; both χ²(K − 1), K counting the
 * strata with a non-degenerate expected table. Matches statsmodels'
 * StratifiedTable.test_equal_odds(adjust=False/True).
 *
 * @example statsmodels' TestStratified3 tables: X²_BD = 18.83297, p = 0.002064786.
 */
export function breslowDayTest(tables: readonly TwoByTwoCounts[], pooledOddsRatio: number): BreslowDayResult {
  let statistic = 0;
  let observedSum = 0;
  let expectedSum = 0;
  let varianceSum = 0;
  let informative = 0;
  for (const { a, b, c, d } of tables) {
    const exposed = a + b;
    const events = a + c;
    const total = a + b + c + d;
    const expected = expectedUnderCommonOddsRatio(exposed, events, total, pooledOddsRatio);
    const cells = [expected, exposed - expected, events - expected, total - exposed - events + expected];
    if (cells.some((cell) => !(cell > 0))) continue;
    const variance = 1 / cells.reduce((sum, cell) => sum + 1 / cell, 0);
    statistic += (a - expected) ** 2 / variance;
    observedSum += a;
    expectedSum += expected;
    varianceSum += variance;
    informative++;
  }
  const df = informative - 1;
  if (df < 1) {
    const empty = { statistic: null, df: Math.max(df, 0), p: null };
    return { breslowDay: empty, tarone: empty };
  }
  const tarone = statistic - (observedSum - expectedSum) ** 2 / varianceSum;
  return {
    breslowDay: { statistic, df, p: chiSquareUpperTail(statistic, df) },
    tarone: { statistic: tarone, df, p: chiSquareUpperTail(tarone, df) },
  };
}
