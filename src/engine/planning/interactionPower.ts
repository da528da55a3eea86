import { normalCdf, normalQuantile } from '../distributions/normal.js';

/**
 * Power of the two-sided Wald test of an interaction term of true size δ (link scale)
 * whose estimate has standard error se, by the normal approximation:
 * power = Φ(|δ|/se − z) + Φ(−|δ|/se − z), z = Φ⁻¹(1 − α/2).
 * An interaction's standard error is about twice a main effect's in a balanced design, so
 * it needs about four times the sample for the same power (Brookes, Whitely, Egger, Smith,
 * Mulheran and Peters, J Clin Epidemiol 2004;57:229-236).
 *
 * @example interactionPower(0.5, 0.25, 0.05) // ≈ 0.516
 */
export function interactionPower(delta: number, se: number, alpha: number): number {
  const z = normalQuantile(1 - alpha / 2);
  const ratio = Math.abs(delta) / se;
  return normalCdf(ratio - z) + normalCdf(-ratio - z);
}

/**
 * The smallest |δ| (link scale) detected with the target power: solves
 * interactionPower(δ, se, α) = power by bisection (it is increasing in |δ|). About
 * (z_{1−α/2} + z_power)·se.
 *
 * @example smallestDetectableInteraction(0.25, 0.05, 0.8) // ≈ 0.700
 */
export function smallestDetectableInteraction(se: number, alpha: number, power: number): number {
  let low = 0;
  let high = (normalQuantile(1 - alpha / 2) + normalQuantile(power) + 2) * se;
  while (interactionPower(high, se, alpha) < power) high *= 2;
  for (let step = 0; step < 200; step++) {
    const middle = 0.5 * (low + high);
    if (interactionPower(middle, se, alpha) < power) low = middle;
    else high = middle;
    if (high - low <= 1e-12 * high) break;
  }
  return 0.5 * (low + high);
}

/**
 * Rows needed to detect |δ| with the target power, assuming the standard error scales as
 * 1/√n from its value se at n rows: n′ = n·(δmin/δ)², δmin the smallest detectable at n.
 */
export function requiredSampleSize(delta: number, se: number, n: number, alpha: number, power: number): number {
  const detectable = smallestDetectableInteraction(se, alpha, power);
  return Math.ceil(n * (detectable / Math.abs(delta)) ** 2);
}
