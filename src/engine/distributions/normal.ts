import jStat from 'jstat';
import { complementaryErrorFunction } from './specialFunctions.js';

const SQRT_HALF = Math.SQRT1_2;
const INVERSE_SQRT_TWO_PI = 1 / Math.sqrt(2 * Math.PI);

/**
 * Standard normal upper tail Q(z) = P(Z > z) = ½·erfc(z/√2), accurate to full relative
 * precision for large z (it never forms 1 − Φ).
 * @example normalUpperTail(1.959963984540054) // 0.025
 */
export function normalUpperTail(z: number): number {
  return 0.5 * complementaryErrorFunction(z * SQRT_HALF);
}

/** Standard normal distribution function Φ(z) = P(Z ≤ z). */
export function normalCdf(z: number): number {
  return normalUpperTail(-z);
}

/** Standard normal density φ(z) = exp(−z²/2)/√(2π). */
export function normalDensity(z: number): number {
  return INVERSE_SQRT_TWO_PI * Math.exp(-0.5 * z * z);
}

/** Two-sided p-value of a standard normal statistic: 2·Q(|z|). */
export function normalTwoSidedP(z: number): number {
  return Math.min(1, 2 * normalUpperTail(Math.abs(z)));
}

/**
 * Standard normal quantile Φ⁻¹(p).
 *
 * Variant: jstat's rational start (jStat.normal.inv) refined by Halley steps on the
 * accurate tail function above, which brings it to the last bit or two of R's qnorm.
 *
 * @throws RangeError when p is not in (0, 1).
 * @example normalQuantile(0.975) // 1.959963984540054
 */
export function normalQuantile(p: number): number {
  if (!(p > 0 && p < 1)) throw new RangeError(`normalQuantile needs 0 < p < 1, got ${p}`);
  if (p === 0.5) return 0;
  // Work in the tail that is small, where relative precision is meaningful.
  const upper = p > 0.5;
  const tail = upper ? 1 - p : p;
  let x = -jStat.normal.inv(tail, 0, 1); // positive, Q(x) = tail
  if (!Number.isFinite(x)) x = Math.sqrt(-2 * Math.log(tail));
  for (let step = 0; step < 6; step++) {
    const error = normalUpperTail(x) - tail;
    const density = normalDensity(x);
    if (density === 0) break;
    // Halley's step for f(x) = Q(x) − tail, f' = −φ, f'' = xφ.
    const newton = error / density;
    const change = newton / (1 + 0.5 * x * newton);
    x += change;
    if (Math.abs(change) <= 1e-16 * Math.max(1, Math.abs(x))) break;
  }
  return upper ? x : -x;
}
