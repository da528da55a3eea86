/**
 * The rules between a specification's choices: which model families an outcome type
 * allows, which effect measure each model gives, which model a measure implies, whether
 * additive measures exist, the bootstrap defaults, and the names of each choice.
 */
import type { Spec } from '../../engine/boundary/schemas';

export type OutcomeType = Spec['outcome']['type'];
export type ModelFamily = Spec['model'];
export type EffectMeasure = NonNullable<Spec['effectMeasure']>;
export type CiMethod = Spec['ci']['method'];
export type Multiplicity = NonNullable<Spec['multiplicity']>;

export const DEFAULT_REPLICATES = 2000;
export const DEFAULT_SEED = 1;

export const MODEL_LABEL: Record<ModelFamily, string> = {
  logistic: 'Logistic regression',
  'log-binomial': 'Log-binomial regression',
  'modified-poisson': 'Poisson regression with robust variance (modified Poisson)',
  linear: 'Linear regression',
};

export const MEASURE_LABEL: Record<EffectMeasure, string> = {
  OR: 'odds ratio',
  RR: 'risk ratio',
  RD: 'risk difference',
  MD: 'mean difference',
};

export const CI_METHOD_LABEL: Record<CiMethod, string> = {
  delta: 'delta method',
  mover: 'MOVER (method of variance estimates recovery)',
  bootstrap: 'percentile bootstrap',
};

export const MULTIPLICITY_LABEL: Record<Multiplicity, string> = {
  none: 'no adjustment',
  holm: 'Holm',
  bh: 'Benjamini-Hochberg',
};

/** The model families a form offers for an outcome type, default first. */
export function modelsFor(outcome: OutcomeType): ModelFamily[] {
  return outcome === 'binary' ? ['logistic', 'log-binomial', 'modified-poisson', 'linear'] : ['linear'];
}

/** The effect measure a model gives (the engine refuses any other). */
export function measureFor(model: ModelFamily, outcome: OutcomeType): EffectMeasure {
  if (model === 'logistic') return 'OR';
  if (model === 'linear') return outcome === 'binary' ? 'RD' : 'MD';
  return 'RR';
}

/** The effect measures open to an outcome type. */
export function measuresFor(outcome: OutcomeType): EffectMeasure[] {
  return outcome === 'binary' ? ['OR', 'RR', 'RD'] : ['MD'];
}

/** The model a form switches to when the analyst picks a measure. */
export function defaultModelFor(measure: EffectMeasure): ModelFamily {
  if (measure === 'OR') return 'logistic';
  if (measure === 'RR') return 'log-binomial';
  return 'linear';
}

/** Whether a specification's additive measures (RERI, AP, S) exist: ratio models only. */
export function isRatioModel(model: ModelFamily): boolean {
  return model !== 'linear';
}
