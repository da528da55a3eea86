import { chiSquareUpperTail } from '../distributions/chiSquare.js';
import type { TestResult } from '../types.js';
import type { TwoByTwoCounts } from './twoByTwoTable.js';

/**
 * Woolf's test of homogeneous odds ratios (Woolf, Ann Hum Genet 1955;19:251-253).
 *
 * Formula: with yk = ln(ak·dk/(bk·ck)), wk = 1/(1/ak + 1/bk + 1/ck + 1/dk) and
 * ȳ = Σwk·yk/Σwk: X² = Σwk(yk − ȳ)² ~ χ²(K − 1). Variant: a stratum with a zero cell gets
 * ½ added to each of its cells (Haldane's correction; `corrected` counts them). Strata
 * with an empty exposure group or no events or no non-events are skipped.
 *
 * @example two strata with equal odds ratios give X² = 0.
 */
export function woolfHomogeneityTest(tables: readonly TwoByTwoCounts[]): TestResult & { corrected: number } {
  const logs: number[] = [];
  const weights: number[] = [];
  let corrected = 0;
  for (const table of tables) {
    let { a, b, c, d } = table;
    if (a + b === 0 || c + d === 0 || a + c === 0 || b + d === 0) continue;
    if (a === 0 || b === 0 || c === 0 || d === 0) {
      a += 0.5;
      b += 0.5;
      c += 0.5;
      d += 0.5;
      corrected++;
    }
    logs.push(Math.log((a * d) / (b * c)));
    weights.push(1 / (1 / a + 1 / b + 1 / c + 1 / d));
  }
  const df = logs.length - 1;
  if (df < 1) return { statistic: null, df: Math.max(df, 0), p: null, corrected };
  const weightSum = weights.reduce((sum, w) => sum + w, 0);
  const pooled = logs.reduce((sum, y, k) => sum + weights[k] * y, 0) / weightSum;
  const statistic = logs.reduce((sum, y, k) => sum + weights[k] * (y - pooled) ** 2, 0);
  return { statistic, df, p: chiSquareUpperTail(statistic, df), corrected };
}
