import { fisherFUpperTail } from '../distributions/fisherF.js';
import type { OmnibusTest } from '../types.js';

/**
 * F test of nested linear models: F = ((RSS_r − RSS_f)/k) / (RSS_f/(n − p)) on (k, n − p)
 * degrees of freedom. Matches R's anova(reduced, full) for lm fits.
 */
export function nestedModelFTest(rssFull: number, rssReduced: number, df: number, residualDf: number): OmnibusTest {
  const statistic = Math.max(0, ((rssReduced - rssFull) / df) / (rssFull / residualDf));
  return { test: 'F', statistic, df, df2: residualDf, p: fisherFUpperTail(statistic, df, residualDf) };
}
