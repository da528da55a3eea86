import { quadraticForm } from '../core/symmetricPositiveDefinite.js';
import type { JointLogRatios } from './jointLogRatios.js';
import type { AdditiveInterval } from './relativeExcessRiskDueToInteraction.js';

/**
 * Attributable proportion due to interaction, AP = RERI / E11 (Rothman 1986; VanderWeele
 * and Knol, Epidemiol Methods 2014;3:33-72), with its delta-method interval (Hosmer and
 * Lemeshow, Epidemiology 1992;3:452-456).
 *
 * Formula: AP = (E11 − E10 − E01 + 1)/E11; gradient over (l10, l01, l11):
 * (−E10/E11, −E01/E11, (E10 + E01 − 1)/E11), equal to Hosmer and Lemeshow's
 * ((E01 − 1)/E11, (E10 − 1)/E11, (E10 + E01 − 1)/E11) over (b1, b2, b3). Limits AP ± z·se.
 *
 * @example E10 = 2, E01 = 3, E11 = 9: AP = 5/9.
 */
export function attributableProportion(joint: JointLogRatios, critical: number): AdditiveInterval {
  const [e10, e01, e11] = joint.estimates.map(Math.exp);
  const estimate = (e11 - e10 - e01 + 1) / e11;
  const gradient = [-e10 / e11, -e01 / e11, (e10 + e01 - 1) / e11];
  const se = Math.sqrt(Math.max(0, quadraticForm(gradient, joint.covariance, 3)));
  return { estimate, se, lower: estimate - critical * se, upper: estimate + critical * se };
}

/**
 * The proportion of the joint effect due to interaction, AP* = RERI / (E11 − 1)
 * (VanderWeele and Knol, Epidemiol Methods 2014;3:33-72), delta-method interval.
 *
 * Formula: AP* = 1 − (E10 + E01 − 2)/(E11 − 1); gradient over (l10, l01, l11):
 * (−E10/(E11 − 1), −E01/(E11 − 1), (E10 + E01 − 2)·E11/(E11 − 1)²).
 * Undefined (null) when E11 = 1.
 *
 * @example E10 = 2, E01 = 3, E11 = 9: AP* = 5/8.
 */
export function attributableProportionOfJointEffect(joint: JointLogRatios, critical: number): AdditiveInterval | null {
  const [e10, e01, e11] = joint.estimates.map(Math.exp);
  const excess = e11 - 1;
  if (excess === 0) return null;
  const estimate = (e11 - e10 - e01 + 1) / excess;
  const gradient = [-e10 / excess, -e01 / excess, ((e10 + e01 - 2) * e11) / (excess * excess)];
  const se = Math.sqrt(Math.max(0, quadraticForm(gradient, joint.covariance, 3)));
  return { estimate, se, lower: estimate - critical * se, upper: estimate + critical * se };
}
