import type { BandPoint } from '../types.js';
import { linearContrastInterval, type EffectScale, type WaldReference } from './linearContrast.js';

/**
 * Band data for the significance-band plot: the conditional effect b1 + b3·(x − c) and
 * its pointwise Wald interval at `points` evenly spaced values across the observed range
 * of the modifier (100 by default), on the effect scale.
 */
export function significanceBand(
  coefficients: ArrayLike<number>,
  covariance: ArrayLike<number>,
  exposureIndex: number,
  productIndex: number,
  centre: number,
  observed: [number, number],
  reference: WaldReference,
  scale: EffectScale,
  points = 100,
): BandPoint[] {
  const p = coefficients.length;
  const band: BandPoint[] = [];
  for (let k = 0; k < points; k++) {
    const x = observed[0] + ((observed[1] - observed[0]) * k) / (points - 1);
    const contrast = new Float64Array(p);
    contrast[exposureIndex] = 1;
    contrast[productIndex] = x - centre;
    const effect = linearContrastInterval(coefficients, covariance, contrast, reference, scale);
    band.push({ x, estimate: effect.estimate, lower: effect.lower, upper: effect.upper });
  }
  return band;
}
