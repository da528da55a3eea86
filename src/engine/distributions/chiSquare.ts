import { regularizedGamma } from './specialFunctions.js';

/**
 * Upper tail of the chi-square distribution, P(X > x) for X ~ χ²(df) = Q(df/2, x/2), the
 * regularized upper incomplete gamma function (matches R's pchisq(x, df, lower.tail = FALSE)).
 *
 * @throws RangeError for df ≤ 0.
 * @example chiSquareUpperTail(3.841458820694124, 1) // 0.05
 */
export function chiSquareUpperTail(x: number, df: number): number {
  if (!(df > 0)) throw new RangeError(`chiSquareUpperTail needs df > 0, got ${df}`);
  if (!(x > 0)) return 1;
  return regularizedGamma(df / 2, x / 2).upper;
}
