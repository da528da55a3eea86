/**
 * Stratified 2 × 2 methods against statsmodels' contingency-table tests.
 *
 * Pinned values: the published numbers in statsmodels 0.13.5's
 * statsmodels/stats/tests/test_contingency_tables.py, classes TestStratified1,
 * TestStratified2 and TestStratified3 (attributes oddsratio_pooled, mh_stat, mh_pvalue,
 * or_lcb, or_ucb, or_homog, or_homog_p, or_homog_adj, or_homog_adj_p), at the 1e-4
 * relative tolerance those tests use (they are printed to 4-7 significant digits).
 * Live values: statsmodels' StratifiedTable itself, via tests/reference/python/
 * stratified_tables.py under Debian's /usr/bin/python3, compared at 1e-9 when it is
 * installed.
 */
import { execFileSync } from 'node:child_process';
import { existsSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';
import { breslowDayTest } from '@/engine/strata/breslowDayTest.js';
import { cochranMantelHaenszelTest } from '@/engine/strata/cochranMantelHaenszelTest.js';
import { mantelHaenszelOddsRatio } from '@/engine/strata/mantelHaenszelOddsRatio.js';
import { mantelHaenszelRiskDifference } from '@/engine/strata/mantelHaenszelRiskDifference.js';
import { mantelHaenszelRiskRatio } from '@/engine/strata/mantelHaenszelRiskRatio.js';
import type { TwoByTwoCounts } from '@/engine/strata/twoByTwoTable.js';
import { woolfHomogeneityTest } from '@/engine/strata/woolfHomogeneityTest.js';
import { expectClose } from './support/tolerance.js';

const z95 = 1.959963984540054; // R 4.2.2: qnorm(0.975)

/** statsmodels' [[a, b], [c, d]] (row 0 exposed, column 0 event) to engine counts. */
const asCounts = (tables: number[][][]): TwoByTwoCounts[] => tables.map(([[a, b], [c, d]]) => ({ a, b, c, d }));

const stratified1 = asCounts([[[0, 0], [6, 5]], [[3, 0], [3, 6]], [[6, 2], [0, 4]], [[5, 6], [1, 0]], [[2, 5], [0, 0]]]);
const stratified2 = asCounts([[[20, 14], [10, 24]], [[15, 12], [3, 15]], [[3, 2], [3, 2]], [[12, 3], [7, 5]], [[1, 0], [3, 2]]]);
const stratified3 = asCounts([
  [[313, 512], [19, 89]], [[207, 353], [8, 17]], [[205, 120], [391, 202]],
  [[278, 139], [244, 131]], [[138, 53], [299, 94]], [[351, 22], [317, 24]],
]);

describe('published values of statsmodels test_contingency_tables.py', () => {
  const published = 1e-4;
  it('TestStratified1: MH OR, its RBG interval and the CMH test', () => {
    const or = mantelHaenszelOddsRatio(stratified1, z95)!;
    expectClose(or.estimate, 7, 'oddsratio_pooled', published); // TestStratified1.oddsratio_pooled
    expectClose(or.lower, 1.026713, 'or_lcb', published);
    expectClose(or.upper, 47.725133, 'or_ucb', published);
    const cmh = cochranMantelHaenszelTest(stratified1);
    expectClose(cmh.statistic, 3.9286, 'mh_stat', published);
    expectClose(cmh.p, 0.04747, 'mh_pvalue', published);
  });

  it('TestStratified2: MH OR, CMH test, Breslow-Day with and without Tarone', () => {
    const or = mantelHaenszelOddsRatio(stratified2, z95)!;
    expectClose(or.estimate, 3.5912, 'oddsratio_pooled', published);
    expectClose(or.lower, 1.781135, 'or_lcb', published);
    expectClose(or.upper, 7.240633, 'or_ucb', published);
    const cmh = cochranMantelHaenszelTest(stratified2);
    expectClose(cmh.statistic, 11.8852, 'mh_stat', published);
    expectClose(cmh.p, 0.0005658, 'mh_pvalue', published);
    const bd = breslowDayTest(stratified2, or.estimate);
    expectClose(bd.breslowDay.statistic, 1.8438, 'or_homog', published);
    expectClose(bd.breslowDay.p, 0.7645, 'or_homog_p', published);
    expectClose(bd.tarone.statistic, 1.8436, 'or_homog_adj', published);
    expectClose(bd.tarone.p, 0.7645, 'or_homog_adj_p', published);
    expect(bd.breslowDay.df).toBe(4); // K − 1 for 5 strata
  });

  it('TestStratified3: MH OR, CMH test, Breslow-Day with and without Tarone', () => {
    const or = mantelHaenszelOddsRatio(stratified3, z95)!;
    expectClose(or.estimate, 1.101879, 'oddsratio_pooled', published);
    expectClose(or.lower, 0.9402012, 'or_lcb', published);
    expectClose(or.upper, 1.2913602, 'or_ucb', published);
    const cmh = cochranMantelHaenszelTest(stratified3);
    expectClose(cmh.statistic, 1.3368, 'mh_stat', published);
    expectClose(cmh.p, 0.2476, 'mh_pvalue', published);
    const bd = breslowDayTest(stratified3, or.estimate);
    expectClose(bd.breslowDay.statistic, 18.83297, 'or_homog', published);
    expectClose(bd.breslowDay.p, 0.002064786, 'or_homog_p', published);
    expectClose(bd.tarone.statistic, 18.83297, 'or_homog_adj', published);
    expectClose(bd.tarone.p, 0.002064786, 'or_homog_adj_p', published);
  });
});

const python = '/usr/bin/python3';
const script = fileURLToPath(new URL('./python/stratified_tables.py', import.meta.url));
function statsmodelsAvailable(): boolean {
  if (!existsSync(python)) return false;
  try {
    execFileSync(python, ['-c', 'import statsmodels'], { stdio: 'ignore' });
    return true;
  } catch {
    return false;
  }
}

interface LiveCase {
  oddsRatio: number;
  logOddsSe: number;
  oddsRatioLower: number;
  oddsRatioUpper: number;
  riskRatio: number;
  cmhStatistic: number;
  cmhP: number;
  breslowDay?: number;
  breslowDayP?: number;
  tarone?: number;
  taroneP?: number;
}

describe.skipIf(!statsmodelsAvailable())('live statsmodels StratifiedTable (tests/reference/python/stratified_tables.py)', () => {
  const live = statsmodelsAvailable() ? (JSON.parse(execFileSync(python, [script], { encoding: 'utf8' })) as { cases: Record<string, LiveCase> }) : { cases: {} };
  const sets: [string, TwoByTwoCounts[]][] = [
    ['TestStratified1', stratified1],
    ['TestStratified2', stratified2],
    ['TestStratified3', stratified3],
  ];
  for (const [name, tables] of sets) {
    it(`${name}: pooled OR, RBG se, pooled RR, CMH and Breslow-Day agree to 1e-9`, () => {
      const expected = live.cases[name];
      const or = mantelHaenszelOddsRatio(tables, z95)!;
      expectClose(or.estimate, expected.oddsRatio, 'oddsratio_pooled', 1e-9);
      expectClose(or.logSe, expected.logOddsSe, 'logodds_pooled_se', 1e-9);
      expectClose(or.lower, expected.oddsRatioLower, 'oddsratio_pooled_confint lower', 1e-9);
      expectClose(or.upper, expected.oddsRatioUpper, 'oddsratio_pooled_confint upper', 1e-9);
      expectClose(mantelHaenszelRiskRatio(tables, z95)?.estimate, expected.riskRatio, 'riskratio_pooled', 1e-9);
      const cmh = cochranMantelHaenszelTest(tables);
      expectClose(cmh.statistic, expected.cmhStatistic, 'test_null_odds(correction=True).statistic', 1e-9);
      expectClose(cmh.p, expected.cmhP, 'test_null_odds p', 1e-9, 1e-14);
      if (expected.breslowDay !== undefined) {
        const bd = breslowDayTest(tables, or.estimate);
        expectClose(bd.breslowDay.statistic, expected.breslowDay, 'test_equal_odds(adjust=False)', 1e-9);
        // statsmodels forms p as 1 − cdf, so compare p with an absolute tolerance.
        expectClose(bd.breslowDay.p, expected.breslowDayP!, 'test_equal_odds p', 1e-9, 1e-14);
        expectClose(bd.tarone.statistic, expected.tarone!, 'test_equal_odds(adjust=True)', 1e-9);
        expectClose(bd.tarone.p, expected.taroneP!, 'test_equal_odds(adjust=True) p', 1e-9, 1e-14);
      }
    });
  }
});

describe('Mantel-Haenszel risk difference and risk ratio: limiting cases', () => {
  it('one balanced stratum: Sato variance equals the Wald variance p1(1−p1)/n1 + p0(1−p0)/n0', () => {
    // Algebraic identity of Sato (1989) with n1 = n0 (derivation in mantelHaenszelRiskDifference.ts).
    const rd = mantelHaenszelRiskDifference([{ a: 30, b: 70, c: 12, d: 88 }], z95)!;
    expectClose(rd.estimate, 0.18, 'RD = 30/100 − 12/100', 1e-12);
    expectClose(rd.se, Math.sqrt((0.3 * 0.7) / 100 + (0.12 * 0.88) / 100), 'Wald se', 1e-12);
  });
  it('one stratum: the MH RR and its Greenland-Robins variance equal the crude RR and the Katz variance', () => {
    // Katz et al. (1978): se(ln RR) = √(1/a − 1/n1 + 1/c − 1/n0).
    const rr = mantelHaenszelRiskRatio([{ a: 20, b: 80, c: 10, d: 140 }], z95)!;
    expectClose(rr.estimate, (20 / 100) / (10 / 150), 'crude RR', 1e-12);
    expectClose(rr.logSe, Math.sqrt(1 / 20 - 1 / 100 + 1 / 10 - 1 / 150), 'Katz se', 1e-12);
  });
  it('Woolf: identical odds ratios in every stratum give a statistic of 0', () => {
    // Common practice check: homogeneous strata (OR = 2 in both) have no heterogeneity.
    const woolf = woolfHomogeneityTest([{ a: 20, b: 10, c: 10, d: 10 }, { a: 40, b: 5, c: 16, d: 4 }]);
    expectClose(woolf.statistic, 0, 'Woolf statistic', 0, 1e-12);
  });
});
