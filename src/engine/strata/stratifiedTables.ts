import type { AnalysisFrame } from '../design/analysisFrame.js';
import type { EngineWarning, StratifiedTables } from '../types.js';
import { breslowDayTest } from './breslowDayTest.js';
import { cochranMantelHaenszelTest } from './cochranMantelHaenszelTest.js';
import { mantelHaenszelOddsRatio } from './mantelHaenszelOddsRatio.js';
import { mantelHaenszelRiskDifference } from './mantelHaenszelRiskDifference.js';
import { mantelHaenszelRiskRatio } from './mantelHaenszelRiskRatio.js';
import { twoByTwoMeasures, type TwoByTwoCounts } from './twoByTwoTable.js';
import { woolfHomogeneityTest } from './woolfHomogeneityTest.js';

/**
 * The stratified 2 × 2 analysis of a binary outcome by the exposure within each level of a
 * categorical modifier (unadjusted for covariates): each stratum's counts and crude
 * OR/RR/RD, the Mantel-Haenszel pooled OR/RR/RD with the CMH test, and the homogeneity
 * tests (Breslow-Day, with Tarone's correction, and Woolf).
 */
export function stratifiedTables(frame: AnalysisFrame, critical: number, warnings: EngineWarning[]): StratifiedTables {
  if (frame.modifier.kind !== 'categorical') throw new Error('stratified tables need a categorical modifier');
  const { levels, codes, column } = frame.modifier;
  const counts = levels.map(() => ({ a: 0, b: 0, c: 0, d: 0 }));
  for (let i = 0; i < frame.n; i++) {
    const table = counts[codes[i]];
    const event = frame.outcome[i] === 1;
    if (frame.exposure[i] === 1) {
      if (event) table.a++;
      else table.b++;
    } else if (event) table.c++;
    else table.d++;
  }
  const tables: TwoByTwoCounts[] = counts;
  const strata = levels.map((level, k) => {
    const table = counts[k];
    if (table.a === 0 || table.b === 0 || table.c === 0 || table.d === 0) {
      warnings.push({
        code: 'ZERO_CELL',
        message: `The 2 × 2 table of the stratum ${column}=${level} has a zero count, so some of its crude ratios are not estimable.`,
        column,
        level,
      });
    }
    return { level, ...table, ...twoByTwoMeasures(table, critical) };
  });
  const pooledOddsRatio = mantelHaenszelOddsRatio(tables, critical);
  const pooledRiskRatio = mantelHaenszelRiskRatio(tables, critical);
  const pooledRiskDifference = mantelHaenszelRiskDifference(tables, critical);
  const homogeneity = pooledOddsRatio === null ? null : breslowDayTest(tables, pooledOddsRatio.estimate);
  const woolf = woolfHomogeneityTest(tables);
  if (woolf.corrected > 0) {
    warnings.push({
      code: 'WOOLF_CORRECTED',
      message: `Woolf's test added ½ to every cell of ${woolf.corrected} stratum table(s) with a zero count.`,
    });
  }
  return {
    strata,
    mantelHaenszel: {
      oddsRatio: pooledOddsRatio && { estimate: pooledOddsRatio.estimate, lower: pooledOddsRatio.lower, upper: pooledOddsRatio.upper },
      riskRatio: pooledRiskRatio && { estimate: pooledRiskRatio.estimate, lower: pooledRiskRatio.lower, upper: pooledRiskRatio.upper },
      riskDifference: pooledRiskDifference && { estimate: pooledRiskDifference.estimate, lower: pooledRiskDifference.lower, upper: pooledRiskDifference.upper },
      riskDifferenceVariances: pooledRiskDifference && pooledRiskDifference.variances.map((entry) => ({ ...entry })),
      chiSquare: { ...cochranMantelHaenszelTest(tables, true), continuityCorrection: true },
    },
    homogeneity: {
      breslowDay: homogeneity?.breslowDay ?? null,
      breslowDayTarone: homogeneity?.tarone ?? null,
      woolf: { statistic: woolf.statistic, df: woolf.df, p: woolf.p },
    },
  };
}
