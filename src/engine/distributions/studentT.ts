import { logGamma, regularizedBeta } from './specialFunctions.js';
import { normalQuantile, normalUpperTail } from './normal.js';

/**
 * Upper tail of Student's t distribution, P(T > t) for T ~ t(df), from
 * P(|T| > t) = I_{df/(df+t²)}(df/2, 1/2) (Abramowitz and Stegun 1964, 26.5.27 and 26.7.1);
 * matches R's pt(t, df, lower.tail = FALSE).
 *
 * @throws RangeError for df ≤ 0.
 */
export function studentTUpperTail(t: number, df: number): number {
  if (!(df > 0)) throw new RangeError(`studentTUpperTail needs df > 0, got ${df}`);
  if (!Number.isFinite(df)) return normalUpperTail(t);
  if (t === 0) return 0.5;
  const x = df / (df + t * t);
  const twoSided = regularizedBeta(x, df / 2, 0.5).lower;
  return t > 0 ? 0.5 * twoSided : 1 - 0.5 * twoSided;
}

/** Two-sided p-value of a t statistic: 2·P(T > |t|). */
export function studentTTwoSidedP(t: number, df: number): number {
  if (!Number.isFinite(df)) return Math.min(1, 2 * normalUpperTail(Math.abs(t)));
  if (t === 0) return 1;
  return regularizedBeta(df / (df + t * t), df / 2, 0.5).lower;
}

function studentTDensity(t: number, df: number): number {
  const logDensity =
    logGamma((df + 1) / 2) - logGamma(df / 2) - 0.5 * Math.log(df * Math.PI) -
    ((df + 1) / 2) * Math.log1p((t * t) / df);
  return Math.exp(logDensity);
}

/**
 * Quantile of Student's t distribution with df degrees of freedom (R's qt(p, df)).
 *
 * Variant: Newton's method on the upper tail above, started at the normal quantile and
 * safeguarded by bisection on a bracket, to about 1e-14 relative.
 *
 * @throws RangeError for p outside (0, 1) or df ≤ 0.
 * @example studentTQuantile(0.975, 10) // 2.2281388519649385
 */
export function studentTQuantile(p: number, df: number): number {
  if (!(p > 0 && p < 1)) throw new RangeError(`studentTQuantile needs 0 < p < 1, got ${p}`);
  if (!(df > 0)) throw new RangeError(`studentTQuantile needs df > 0, got ${df}`);
  if (!Number.isFinite(df)) return normalQuantile(p);
  if (p === 0.5) return 0;
  const upper = p > 0.5;
  const tail = upper ? 1 - p : p; // find t > 0 with P(T > t) = tail
  let low = 0;
  let high = Math.max(1, normalQuantile(1 - tail));
  while (studentTUpperTail(high, df) > tail) {
    low = high;
    high *= 2;
    if (high > 1e300) break;
  }
  let t = Math.min(Math.max(normalQuantile(1 - tail), low), high);
  for (let iteration = 0; iteration < 200; iteration++) {
    const error = studentTUpperTail(t, df) - tail; // decreasing in t
    if (error > 0) low = t;
    else high = t;
    const density = studentTDensity(t, df);
    let next = density > 0 ? t + error / density : Number.NaN;
    if (!(next > low && next < high)) next = 0.5 * (low + high);
    if (Math.abs(next - t) <= 1e-15 * Math.max(1, Math.abs(t))) {
      t = next;
      break;
    }
    t = next;
  }
  return upper ? t : -t;
}
