import { attributableProportion, attributableProportionOfJointEffect } from '../measures/attributableProportion.js';
import { jointLogRatios, recodeForPreventive, type JointLogRatios } from '../measures/jointLogRatios.js';
import { linearContrastInterval } from '../measures/linearContrast.js';
import {
  relativeExcessRiskDueToInteraction,
  relativeExcessRiskDueToInteractionMover,
  type AdditiveInterval,
} from '../measures/relativeExcessRiskDueToInteraction.js';
import { synergyIndex } from '../measures/synergyIndex.js';
import type { AdditiveEntry, MeasureInterval } from '../types.js';
import type { FittedAnalysis } from './fittedAnalysis.js';
import type { ModifierEffects } from './modifierEffects.js';
import type { CheckedSpec } from './validateSpec.js';

function measureInterval(interval: AdditiveInterval | null, method: MeasureInterval['method']): MeasureInterval | null {
  if (interval === null) return null;
  return { estimate: interval.estimate, lower: interval.lower, upper: interval.upper, se: interval.se, method };
}

function additiveFromJoint(joint: JointLogRatios, critical: number, method: CheckedSpec['method']) {
  const reri = relativeExcessRiskDueToInteraction(joint, critical);
  if (method === 'mover') {
    const mover = relativeExcessRiskDueToInteractionMover(joint, critical);
    return {
      reri: { estimate: reri.estimate, lower: mover.lower, upper: mover.upper, se: reri.se, method: 'mover' as const },
      ap: measureInterval(attributableProportion(joint, critical), 'delta'),
      apStar: measureInterval(attributableProportionOfJointEffect(joint, critical), 'delta'),
      s: measureInterval(synergyIndex(joint, critical), 'delta'),
    };
  }
  return {
    reri: measureInterval(reri, 'delta'),
    ap: measureInterval(attributableProportion(joint, critical), 'delta'),
    apStar: measureInterval(attributableProportionOfJointEffect(joint, critical), 'delta'),
    s: measureInterval(synergyIndex(joint, critical), 'delta'),
  };
}

/** Additive entries and the contrasts (recoded for a preventive exposure when asked) that the bootstrap resamples. */
export interface AdditiveInteraction {
  additive: AdditiveEntry[];
  recodedContrasts: Float64Array[];
}

/**
 * Additive interaction per modifier level: RERI, AP, AP* and S with delta (or MOVER for
 * RERI) limits for ratio models, or the difference of differences for the linear model.
 */
export function additiveInteraction(analysis: FittedAnalysis, effects: ModifierEffects): AdditiveInteraction {
  const { frame, fit, checked, reference, ratio, critical, p, warnings } = analysis;
  const { coefficients, covariance } = fit;
  const exposureReference = frame.exposureLevels[0];
  const additive: AdditiveEntry[] = [];
  const recodedContrasts: Float64Array[] = [];
  for (const { level, contrasts } of effects.jointByLevel) {
    const modifierReference = frame.modifier.kind === 'categorical' ? frame.modifier.levels[0] : `mean of ${frame.modifier.column}`;
    if (!ratio) {
      const productRow = contrasts.subarray(2 * p, 3 * p).map((value, j) => value - contrasts[j] - contrasts[p + j]);
      const difference = linearContrastInterval(coefficients, covariance, productRow, reference, 'difference');
      additive.push({ level, reference: { exposure: exposureReference, modifier: modifierReference }, reri: null, ap: null, apStar: null, s: null, differenceInDifferences: difference });
      recodedContrasts.push(productRow);
      continue;
    }
    let jointEffects = jointLogRatios(coefficients, covariance, contrasts);
    if (checked.preventive) {
      jointEffects = recodeForPreventive(coefficients, covariance, jointEffects);
    } else if (jointEffects.estimates.some((value) => value < 0)) {
      warnings.push({
        code: 'PREVENTIVE_EXPOSURE',
        message: `For ${level}, a joint stratum has a lower risk than the reference; RERI, AP and S are easier to read after recoding so that the lowest-risk stratum is the reference (set "preventive").`,
        level,
      });
    }
    recodedContrasts.push(jointEffects.contrasts);
    const [refExposure, refModifier] = jointEffects.referenceCell;
    const measures = additiveFromJoint(jointEffects, critical, checked.method);
    if (measures.s === null) {
      warnings.push({
        code: 'S_UNDEFINED',
        message: `The synergy index S is undefined for ${level} (a joint effect is not above the reference; see "preventive").`,
        level,
      });
    }
    additive.push({
      level,
      reference: { exposure: frame.exposureLevels[refExposure], modifier: refModifier === 0 ? modifierReference : level },
      ...measures,
      differenceInDifferences: null,
    });
  }
  if (ratio && checked.method === 'mover') {
    warnings.push({
      code: 'MOVER_RERI_ONLY',
      message: 'MOVER intervals are computed for RERI; AP, AP* and S use delta-method intervals.',
    });
  }
  return { additive, recodedContrasts };
}
