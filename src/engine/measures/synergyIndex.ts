import { quadraticForm } from '../core/symmetricPositiveDefinite.js';
import type { JointLogRatios } from './jointLogRatios.js';
import type { AdditiveInterval } from './relativeExcessRiskDueToInteraction.js';

/**
 * Synergy index S = (E11 − 1)/(E10 + E01 − 2) (Rothman, Am J Epidemiol 1976;103:506-511),
 * with the delta-method interval on the log scale (Hosmer and Lemeshow, Epidemiology
 * 1992;3:452-456).
 *
 * Formula: ln S = ln(E11 − 1) − ln(E10 + E01 − 2); gradient over (l10, l01, l11):
 * (−E10/D, −E01/D, k) with D = E10 + E01 − 2 and k = E11/(E11 − 1), which over
 * (b1, b2, b3) is Hosmer and Lemeshow's (k − E10/D, k − E01/D, k). The interval is
 * exp(ln S ± z·se(ln S)); `se` is that of ln S.
 *
 * Returns null when S is undefined on the log scale (E11 ≤ 1 or D ≤ 0, e.g. for a
 * preventive exposure that has not been recoded).
 *
 * @example E10 = 2, E01 = 3, E11 = 9: S = 8/3.
 */
export function synergyIndex(joint: JointLogRatios, critical: number): AdditiveInterval | null {
  const [e10, e01, e11] = joint.estimates.map(Math.exp);
  const denominator = e10 + e01 - 2;
  const numerator = e11 - 1;
  if (!(denominator > 0) || !(numerator > 0)) return null;
  const logS = Math.log(numerator) - Math.log(denominator);
  const k = e11 / numerator;
  const se = Math.sqrt(Math.max(0, quadraticForm([-e10 / denominator, -e01 / denominator, k], joint.covariance, 3)));
  return { estimate: Math.exp(logS), se, lower: Math.exp(logS - critical * se), upper: Math.exp(logS + critical * se) };
}
