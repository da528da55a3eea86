import { contrastCovariance } from '../core/symmetricPositiveDefinite.js';

/**
 * The three log-scale joint effects behind the additive measures of one modifier level,
 * each a linear combination of the coefficients, against the joint reference cell:
 * l10 = ln E10 (intervention alone), l01 = ln E01 (modifier level alone),
 * l11 = ln E11 (both). For a categorical modifier l10 = b1, l01 = b2, l11 = b1 + b2 + b3.
 */
export interface JointLogRatios {
  /** Rows c10, c01, c11 of the 3 × p contrast matrix, row-major. */
  readonly contrasts: Float64Array;
  readonly estimates: readonly [number, number, number];
  /** 3 × 3 covariance of (l10, l01, l11), row-major: C V Cᵀ. */
  readonly covariance: Float64Array;
  /** Which original cells are the reference and "both" after any recoding, as (exposure, modifier) 0/1. */
  readonly referenceCell: readonly [number, number];
}

/** Builds the joint log-ratios from three contrast rows c10, c01, c11 over the coefficients. */
export function jointLogRatios(
  coefficients: ArrayLike<number>,
  covariance: ArrayLike<number>,
  contrasts: Float64Array,
  referenceCell: readonly [number, number] = [0, 0],
): JointLogRatios {
  const p = coefficients.length;
  const estimates = [0, 0, 0].map((_, row) => {
    let total = 0;
    for (let j = 0; j < p; j++) total += contrasts[row * p + j] * coefficients[j];
    return total;
  }) as [number, number, number];
  return { contrasts, estimates, covariance: contrastCovariance(contrasts, covariance, 3, p), referenceCell };
}

/**
 * Recoding for preventive exposures (Knol, VanderWeele, Groenwold, Klungel, Rovers and
 * Grobbee, Eur J Epidemiol 2011;26:433-438): the reference becomes the joint cell with
 * the lowest risk, and each factor is recoded so that its new reference is that cell's
 * level. With l00 = 0 and cells (a, m), the recoded l′(i,j) = l(i ⊕ a*, j ⊕ m*) − l(a*, m*)
 * for the lowest cell (a*, m*). Returns the input unchanged when (0, 0) is already lowest.
 *
 * @example estimates (l10, l01, l11) = (−0.5, 0.2, −0.1): the lowest cell is (1, 0), so the
 *   recoded (l′10, l′01, l′11) = (0.5, 0.4, 0.7) against "intervention, reference level".
 */
export function recodeForPreventive(
  coefficients: ArrayLike<number>,
  covariance: ArrayLike<number>,
  joint: JointLogRatios,
): JointLogRatios {
  const p = coefficients.length;
  const [l10, l01, l11] = joint.estimates;
  const cells: [number, number, number][] = [
    [0, 0, 0],
    [1, 0, l10],
    [0, 1, l01],
    [1, 1, l11],
  ];
  let lowest = cells[0];
  for (const cell of cells) if (cell[2] < lowest[2]) lowest = cell;
  if (lowest[0] === 0 && lowest[1] === 0) return joint;
  const [a, m] = lowest;
  const rowOf = (exposure: number, modifier: number): Float64Array => {
    const out = new Float64Array(p);
    const index = exposure === 1 && modifier === 0 ? 0 : exposure === 0 && modifier === 1 ? 1 : exposure === 1 && modifier === 1 ? 2 : -1;
    if (index >= 0) for (let j = 0; j < p; j++) out[j] = joint.contrasts[index * p + j];
    return out;
  };
  const reference = rowOf(a, m);
  const recoded = new Float64Array(3 * p);
  const targets: [number, number][] = [
    [1 ^ a, 0 ^ m],
    [0 ^ a, 1 ^ m],
    [1 ^ a, 1 ^ m],
  ];
  targets.forEach(([exposure, modifier], row) => {
    const source = rowOf(exposure, modifier);
    for (let j = 0; j < p; j++) recoded[row * p + j] = source[j] - reference[j];
  });
  return jointLogRatios(coefficients, covariance, recoded, [a, m]);
}
