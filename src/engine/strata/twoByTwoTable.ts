import type { Interval } from '../types.js';

/**
 * One stratum's 2 × 2 table: a exposed events, b exposed non-events, c unexposed events,
 * d unexposed non-events.
 */
export interface TwoByTwoCounts {
  readonly a: number;
  readonly b: number;
  readonly c: number;
  readonly d: number;
}

export interface TwoByTwoMeasures {
  readonly oddsRatio: Interval | null;
  readonly riskRatio: Interval | null;
  readonly riskDifference: Interval | null;
}

/**
 * Crude odds ratio, risk ratio and risk difference of one 2 × 2 table with Wald
 * intervals: OR = ad/(bc) with se(ln OR) = √(1/a + 1/b + 1/c + 1/d) (Woolf, Ann Hum Genet
 * 1955;19:251-253); RR = (a/n1)/(c/n0) with se(ln RR) = √(1/a − 1/n1 + 1/c − 1/n0) (Katz,
 * Baptista, Azen and Pike, Biometrics 1978;34:469-474); RD = a/n1 − c/n0 with
 * se = √(p1(1 − p1)/n1 + p0(1 − p0)/n0). A ratio needing a zero count is null (no
 * continuity correction); RD is null only when an exposure group is empty.
 *
 * @example twoByTwoMeasures({ a: 20, b: 80, c: 10, d: 90 }, 1.96).riskRatio // { estimate: 2, ... }
 */
export function twoByTwoMeasures(table: TwoByTwoCounts, critical: number): TwoByTwoMeasures {
  const { a, b, c, d } = table;
  const exposed = a + b;
  const unexposed = c + d;
  let oddsRatio: Interval | null = null;
  if (a > 0 && b > 0 && c > 0 && d > 0) {
    const log = Math.log((a * d) / (b * c));
    const se = Math.sqrt(1 / a + 1 / b + 1 / c + 1 / d);
    oddsRatio = { estimate: Math.exp(log), lower: Math.exp(log - critical * se), upper: Math.exp(log + critical * se) };
  }
  let riskRatio: Interval | null = null;
  if (a > 0 && c > 0) {
    const log = Math.log((a / exposed) / (c / unexposed));
    const se = Math.sqrt(1 / a - 1 / exposed + 1 / c - 1 / unexposed);
    riskRatio = { estimate: Math.exp(log), lower: Math.exp(log - critical * se), upper: Math.exp(log + critical * se) };
  }
  let riskDifference: Interval | null = null;
  if (exposed > 0 && unexposed > 0) {
    const p1 = a / exposed;
    const p0 = c / unexposed;
    const se = Math.sqrt((p1 * (1 - p1)) / exposed + (p0 * (1 - p0)) / unexposed);
    riskDifference = { estimate: p1 - p0, lower: p1 - p0 - critical * se, upper: p1 - p0 + critical * se };
  }
  return { oddsRatio, riskRatio, riskDifference };
}
