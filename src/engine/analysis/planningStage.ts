import { interactionPower, requiredSampleSize, smallestDetectableInteraction } from '../planning/interactionPower.js';
import type { PlanningBlock } from '../types.js';
import type { FittedAnalysis } from './fittedAnalysis.js';
import type { ModifierEffects } from './modifierEffects.js';

/** Planning: power for the observed n and the detectable interaction at the target power, per product term. */
export function planningStage(analysis: FittedAnalysis, effects: ModifierEffects): PlanningBlock {
  const { spec, checked, frame, design, fit, ratio, p } = analysis;
  const { coefficients, covariance } = fit;
  const specifiedInteraction = spec.planning?.interaction;
  const interactionSource: PlanningBlock['interactionSource'] = specifiedInteraction === undefined ? 'main-effect' : 'spec';
  const delta = specifiedInteraction === undefined ? Math.abs(coefficients[design.exposureIndex]) : ratio ? Math.log(specifiedInteraction) : specifiedInteraction;
  return {
    method: 'normal-approximation',
    alpha: checked.alpha,
    targetPower: checked.targetPower,
    n: frame.n,
    interactionSource,
    levels: design.productIndices.map((product, k) => {
      const se = Math.sqrt(covariance[product * p + product]);
      const detectable = smallestDetectableInteraction(se, checked.alpha, checked.targetPower);
      return {
        level: effects.jointByLevel[k]?.level ?? design.terms[product].name,
        se,
        interaction: ratio ? Math.exp(delta) : delta,
        power: delta === 0 ? null : interactionPower(delta, se, checked.alpha),
        detectable: ratio ? { lower: Math.exp(-detectable), upper: Math.exp(detectable) } : { lower: -detectable, upper: detectable },
        requiredN: delta === 0 ? null : requiredSampleSize(delta, se, frame.n, checked.alpha, checked.targetPower),
      };
    }),
  };
}
