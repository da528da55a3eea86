import { regularizedBeta } from './specialFunctions.js';

/**
 * Upper tail of the F distribution, P(F > f) for F ~ F(df1, df2), as
 * I_{df2/(df2 + df1·f)}(df2/2, df1/2) (Abramowitz and Stegun 1964, 26.6.2); matches R's
 * pf(f, df1, df2, lower.tail = FALSE).
 *
 * @throws RangeError for df1 ≤ 0 or df2 ≤ 0.
 */
export function fisherFUpperTail(f: number, df1: number, df2: number): number {
  if (!(df1 > 0) || !(df2 > 0)) throw new RangeError(`fisherFUpperTail needs positive df, got ${df1}, ${df2}`);
  if (!(f > 0)) return 1;
  return regularizedBeta(df2 / (df2 + df1 * f), df2 / 2, df1 / 2).lower;
}
