import { quadraticForm } from '../core/symmetricPositiveDefinite.js';
import type { JointLogRatios } from './jointLogRatios.js';

export interface AdditiveInterval {
  readonly estimate: number;
  readonly se: number;
  readonly lower: number;
  readonly upper: number;
}

/**
 * Relative excess risk due to interaction, RERI = E11 − E10 − E01 + 1 (Rothman, Modern
 * Epidemiology, 1986), with its delta-method interval (Hosmer and Lemeshow, Epidemiology
 * 1992;3:452-456).
 *
 * Formula: with Eij = exp(lij), Var(RERI) = hᵀVh, h = (−E10, −E01, E11) over
 * (l10, l01, l11) — for a categorical modifier the same as Hosmer and Lemeshow's
 * h = (E11 − E10, E11 − E01, E11) over (b1, b2, b3). Limits: RERI ± z·se.
 *
 * @example Eij from b = (ln 2, ln 3, ln 1.5), V = 0: RERI = 9 − 2 − 3 + 1 = 5.
 */
export function relativeExcessRiskDueToInteraction(joint: JointLogRatios, critical: number): AdditiveInterval {
  const [e10, e01, e11] = joint.estimates.map(Math.exp);
  const estimate = e11 - e10 - e01 + 1;
  const se = Math.sqrt(Math.max(0, quadraticForm([-e10, -e01, e11], joint.covariance, 3)));
  return { estimate, se, lower: estimate - critical * se, upper: estimate + critical * se };
}

/**
 * MOVER interval for RERI (method of variance estimates recovery; Zou, Am J Epidemiol
 * 2008;168:212-224), built from the log-scale Wald limits of each ratio.
 *
 * Formula: with θij = Eij and limits (lij, uij) = exp(ln θij ∓ z·se(ln θij)), and r the
 * correlations of the log-scale estimates (Zou's approximation for the correlation of
 * the ratio estimates themselves),
 *   L = RERI − √[(θ11 − l11)² + (u10 − θ10)² + (u01 − θ01)²
 *               − 2r(11,10)(θ11 − l11)(u10 − θ10) − 2r(11,01)(θ11 − l11)(u01 − θ01)
 *               + 2r(10,01)(u10 − θ10)(u01 − θ01)]
 *   U = RERI + √[(u11 − θ11)² + (θ10 − l10)² + (θ01 − l01)²
 *               − 2r(11,10)(u11 − θ11)(θ10 − l10) − 2r(11,01)(u11 − θ11)(θ01 − l01)
 *               + 2r(10,01)(θ10 − l10)(θ01 − l01)]
 * (the signs follow from RERI = θ11 + (−θ10) + (−θ01) + 1: a negated ratio's lower limit
 * is −u and its correlation with the others changes sign).
 *
 * @example with zero covariance the limits are the ratios' own limits combined by squares.
 */
export function relativeExcessRiskDueToInteractionMover(joint: JointLogRatios, critical: number): { lower: number; upper: number } {
  const [l10, l01, l11] = joint.estimates;
  const v = joint.covariance;
  const se10 = Math.sqrt(v[0]);
  const se01 = Math.sqrt(v[4]);
  const se11 = Math.sqrt(v[8]);
  const t10 = Math.exp(l10);
  const t01 = Math.exp(l01);
  const t11 = Math.exp(l11);
  const lo10 = Math.exp(l10 - critical * se10);
  const hi10 = Math.exp(l10 + critical * se10);
  const lo01 = Math.exp(l01 - critical * se01);
  const hi01 = Math.exp(l01 + critical * se01);
  const lo11 = Math.exp(l11 - critical * se11);
  const hi11 = Math.exp(l11 + critical * se11);
  const correlation = (a: number, b: number, sa: number, sb: number) => (sa > 0 && sb > 0 ? v[a * 3 + b] / (sa * sb) : 0);
  const r1001 = correlation(0, 1, se10, se01);
  const r1011 = correlation(0, 2, se10, se11);
  const r0111 = correlation(1, 2, se01, se11);
  const reri = t11 - t10 - t01 + 1;
  const lowerSquare =
    (t11 - lo11) ** 2 + (hi10 - t10) ** 2 + (hi01 - t01) ** 2 -
    2 * r1011 * (t11 - lo11) * (hi10 - t10) -
    2 * r0111 * (t11 - lo11) * (hi01 - t01) +
    2 * r1001 * (hi10 - t10) * (hi01 - t01);
  const upperSquare =
    (hi11 - t11) ** 2 + (t10 - lo10) ** 2 + (t01 - lo01) ** 2 -
    2 * r1011 * (hi11 - t11) * (t10 - lo10) -
    2 * r0111 * (hi11 - t11) * (t01 - lo01) +
    2 * r1001 * (t10 - lo10) * (t01 - lo01);
  return { lower: reri - Math.sqrt(Math.max(0, lowerSquare)), upper: reri + Math.sqrt(Math.max(0, upperSquare)) };
}
