/**
 * The rules between a specification's choices: which model families an outcome type
 * allows (and why not), which effect measure each model gives, whether additive measures
 * exist, the bootstrap defaults, and the names of each choice. A choice never changes
 * another field: the form disables what does not fit, with the reason.
 */
import type { Spec } from '@/engine/boundary/schemas';
import { extrasProblems } from './extrasRules';

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
  poisson: 'Poisson regression for counts and rates',
};

export const MEASURE_LABEL: Record<EffectMeasure, string> = {
  OR: 'odds ratio',
  RR: 'risk ratio',
  RD: 'risk difference',
  MD: 'mean difference',
};

/** The measure's name for an outcome type: a ratio of rates (or of mean counts) for count outcomes. */
export function measureLabel(measure: EffectMeasure, outcome: OutcomeType): string {
  return outcome === 'count' && measure === 'RR' ? 'rate ratio' : MEASURE_LABEL[measure];
}

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

export const MODELS: ModelFamily[] = ['logistic', 'log-binomial', 'modified-poisson', 'linear', 'poisson'];
export const MEASURES: EffectMeasure[] = ['OR', 'RR', 'RD', 'MD'];

/** Why saving refuses a model for an outcome type, or null when it accepts it. */
export function modelRefusal(outcome: OutcomeType, model: ModelFamily): string | null {
  if (outcome === 'binary' && model === 'linear') return 'A binary outcome needs a logistic, log-binomial or modified Poisson model.';
  if (outcome === 'continuous' && model !== 'linear') return 'A continuous outcome needs the linear model.';
  if (outcome === 'count' && model !== 'poisson') return 'A count outcome needs the Poisson model.';
  if (outcome !== 'count' && model === 'poisson') return 'The Poisson model needs a count outcome.';
  return null;
}

/** Why a measure cannot go with the chosen model and outcome type, or null when it can. */
export function measureRefusal(outcome: OutcomeType, model: ModelFamily, measure: EffectMeasure): string | null {
  if (!measuresFor(outcome).includes(measure)) return `A ${outcome} outcome has no ${MEASURE_LABEL[measure]}.`;
  const implied = measureFor(model, outcome);
  if (implied === measure) return null;
  const givers = MODELS.filter((m) => modelRefusal(outcome, m) === null && measureFor(m, outcome) === measure);
  if (givers.length === 0) return `No model open to a ${outcome} outcome gives the ${MEASURE_LABEL[measure]}.`;
  return `${MODEL_LABEL[model]} gives the ${MEASURE_LABEL[implied]}; choose ${givers.map((m) => MODEL_LABEL[m]).join(' or ')} first.`;
}

/**
 * The choice rules a stored specification must meet, as { path, message } with paths
 * into the request body: the one check the form's validation, its summary panel and the
 * server's refusal all use, so the summary never calls runnable what saving refuses.
 */
export function specRuleProblems(
  spec: Pick<Spec, 'outcome' | 'model' | 'effectMeasure'> & Partial<Pick<Spec, 'exposure' | 'modifier' | 'covariates' | 'cluster' | 'weights' | 'standardErrors' | 'ci' | 'standardize'>>,
): { path: string; message: string }[] {
  const problems: { path: string; message: string }[] = [];
  const standardize = spec.standardize === true ? standardizeRefusal(spec.outcome.type, spec.modifier?.type ?? null) : null;
  if (standardize) problems.push({ path: 'spec.standardize', message: standardize });
  const model = modelRefusal(spec.outcome.type, spec.model);
  if (model) problems.push({ path: 'spec.model', message: model });
  const measure = spec.effectMeasure === undefined ? null : measureRefusal(spec.outcome.type, spec.model, spec.effectMeasure);
  if (measure && !model) problems.push({ path: 'spec.effectMeasure', message: measure });
  problems.push(...extrasProblems(spec));
  return problems;
}

/** The model families a form offers for an outcome type, default first (others are shown disabled). */
export function modelsFor(outcome: OutcomeType): ModelFamily[] {
  return MODELS.filter((model) => modelRefusal(outcome, model) === null);
}

/** The effect measure a model gives (the engine refuses any other). */
export function measureFor(model: ModelFamily, outcome: OutcomeType): EffectMeasure {
  if (model === 'logistic') return 'OR';
  if (model === 'linear') return outcome === 'binary' ? 'RD' : 'MD';
  return 'RR';
}

/** The effect measures open to an outcome type. */
export function measuresFor(outcome: OutcomeType): EffectMeasure[] {
  return outcome === 'binary' ? ['OR', 'RR', 'RD'] : outcome === 'count' ? ['RR'] : ['MD'];
}

/** Whether a specification's additive measures (RERI, AP, S) exist: ratio models only. */
export function isRatioModel(model: ModelFamily): boolean {
  return model !== 'linear';
}

/**
 * Why standardized absolute effects (risks under each arm, RD, NNT) cannot be asked for, or
 * null when they can: they are means of predicted risks, so they need a binary outcome, and
 * they are given within each level of a categorical modifier (methods.md, "Rates, doses,
 * absolute effects"). The engine's validateSpec refuses the same.
 */
export function standardizeRefusal(outcome: OutcomeType, modifier: 'categorical' | 'continuous' | null): string | null {
  if (outcome !== 'binary') return 'Standardized risks, risk differences and NNT need a binary outcome; this outcome is continuous.';
  if (modifier === 'continuous') {
    return 'Standardized absolute effects are given within each level of a categorical modifier; band the continuous modifier into a categorical column, or read its conditional effects.';
  }
  return null;
}
