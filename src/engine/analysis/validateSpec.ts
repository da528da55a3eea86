import { InvalidSpecError } from '../errors.js';
import type { AnalysisSpec, AnySpec, CiMethod, EffectMeasure, MultiplicityCorrection } from '../types.js';
import { validateExtras } from './validateExtras.js';

export interface CheckedSpec {
  readonly level: number;
  readonly alpha: number;
  readonly method: CiMethod;
  readonly replicates: number;
  readonly seed: number;
  readonly multiplicity: MultiplicityCorrection;
  readonly preventive: boolean;
  readonly standardErrors: 'model' | 'hc3' | 'robust';
  readonly effectMeasure: EffectMeasure;
  readonly targetPower: number;
  /** A continuous intervention (dose). */
  readonly continuousExposure: boolean;
}

const MODELS = ['logistic', 'modified-poisson', 'log-binomial', 'linear', 'poisson'];

/**
 * Checks the parts of a specification that the engine relies on (the zod schema at the
 * boundary checks the shape) and fills in the defaults of the optional extras.
 *
 * @throws InvalidSpecError naming the offending field.
 */
export function validateSpec(spec: AnalysisSpec): CheckedSpec {
  if (spec === null || typeof spec !== 'object') throw new InvalidSpecError('The specification must be an object.');
  for (const field of ['outcome', 'exposure', 'modifier', 'ci'] as const) {
    if (spec[field] === null || typeof spec[field] !== 'object') throw new InvalidSpecError(`The specification needs "${field}".`);
  }
  if (!Array.isArray(spec.covariates)) throw new InvalidSpecError('The specification needs "covariates" (an array, possibly empty).');
  if (!MODELS.includes(spec.model)) throw new InvalidSpecError(`Unknown model "${String(spec.model)}"; use one of ${MODELS.join(', ')}.`);
  if (spec.outcome.type !== 'binary' && spec.outcome.type !== 'continuous' && spec.outcome.type !== 'count') throw new InvalidSpecError('outcome.type must be "binary", "continuous" or "count".');
  validateExtras(spec);
  if (spec.model !== 'linear' && spec.model !== 'poisson' && spec.outcome.type !== 'binary') {
    throw new InvalidSpecError(`The ${spec.model} model needs a binary outcome.`, { column: spec.outcome.column });
  }
  const exposureType = spec.exposure.type ?? 'binary';
  if (exposureType !== 'binary' && exposureType !== 'continuous') throw new InvalidSpecError('exposure.type must be "binary" or "continuous".');
  if (exposureType === 'binary' && typeof spec.exposure.reference !== 'string') {
    throw new InvalidSpecError('exposure.reference must be a level name (a string such as "0").', { column: spec.exposure.column });
  }
  if (exposureType === 'continuous') refuseForDose(spec);
  checkOrdered(spec);
  if (spec.modifier.type === 'categorical' && spec.modifier.reference !== undefined && typeof spec.modifier.reference !== 'string') {
    throw new InvalidSpecError('modifier.reference must be a level name.', { column: spec.modifier.column });
  }
  if (spec.modifier.type !== 'categorical' && spec.modifier.type !== 'continuous') throw new InvalidSpecError('modifier.type must be "categorical" or "continuous".');
  const level = spec.ci.level;
  if (!(typeof level === 'number' && level > 0.5 && level < 1)) throw new InvalidSpecError('ci.level must be a number between 0.5 and 1, e.g. 0.95.');
  const method = spec.ci.method;
  if (method !== 'delta' && method !== 'mover' && method !== 'bootstrap') throw new InvalidSpecError('ci.method must be "delta", "mover" or "bootstrap".');
  const replicates = spec.ci.replicates ?? 2000;
  if (!Number.isInteger(replicates) || replicates < 100 || replicates > 100_000) {
    throw new InvalidSpecError('ci.replicates must be an integer between 100 and 100,000.');
  }
  const seed = spec.ci.seed ?? 1;
  if (!Number.isInteger(seed) || seed < 0 || seed > 0xffffffff) throw new InvalidSpecError('ci.seed must be an integer between 0 and 4294967295.');
  const alpha = spec.alpha ?? 1 - level;
  if (!(alpha > 0 && alpha < 0.5)) throw new InvalidSpecError('alpha must be between 0 and 0.5.');
  const multiplicity = spec.multiplicity ?? 'holm';
  if (!['none', 'holm', 'bh'].includes(multiplicity)) throw new InvalidSpecError('multiplicity must be "none", "holm" or "bh".');
  const standardErrors = spec.standardErrors ?? 'model';
  if (standardErrors !== 'model' && standardErrors !== 'hc3' && standardErrors !== 'robust') throw new InvalidSpecError('standardErrors must be "model", "hc3" or "robust".');
  if (standardErrors === 'hc3' && spec.model !== 'linear') throw new InvalidSpecError('standardErrors "hc3" applies to linear models only.');
  const implied: EffectMeasure =
    spec.model === 'logistic' ? 'OR' : spec.model === 'linear' ? (spec.outcome.type === 'binary' ? 'RD' : 'MD') : 'RR';
  if (spec.effectMeasure !== undefined && spec.effectMeasure !== implied) {
    throw new InvalidSpecError(`The effect measure ${spec.effectMeasure} does not match the ${spec.model} model with a ${spec.outcome.type} outcome, which gives ${implied}.`);
  }
  const targetPower = spec.planning?.power ?? 0.8;
  if (!(targetPower > 0.05 && targetPower < 1)) throw new InvalidSpecError('planning.power must be between 0.05 and 1.');
  const interaction = spec.planning?.interaction;
  if (interaction !== undefined) {
    if (!Number.isFinite(interaction)) throw new InvalidSpecError('planning.interaction must be a number.');
    if (spec.model !== 'linear' && !(interaction > 0 && interaction !== 1)) {
      throw new InvalidSpecError('planning.interaction is a ratio of ratios for this model: a positive number other than 1.');
    }
    if (spec.model === 'linear' && interaction === 0) throw new InvalidSpecError('planning.interaction must not be 0.');
  }
  if (spec.standardize !== undefined && typeof spec.standardize !== 'boolean') throw new InvalidSpecError('standardize must be true or false.');
  if (spec.standardize === true) {
    // Standardized risks (methods.md, "Rates, doses, absolute effects") are means of predicted risks.
    if (spec.outcome.type !== 'binary') {
      throw new InvalidSpecError('Standardized absolute effects (risks, risk difference, NNT) need a binary outcome; this outcome is continuous.', { column: spec.outcome.column });
    }
    if (spec.modifier.type !== 'categorical') {
      throw new InvalidSpecError(
        'Standardized absolute effects are given within each level of a categorical modifier; for a continuous modifier, analyse it in bands (a categorical column) or read the conditional effects at chosen values.',
        { column: spec.modifier.column },
      );
    }
  }
  if (spec.modifier.type === 'continuous') {
    const centre = spec.modifier.centre;
    if (centre !== undefined && !['none', 'mean', 'median'].includes(String(centre)) && !Number.isFinite(centre)) {
      throw new InvalidSpecError('modifier.centre must be "none", "mean", "median" or a number.');
    }
  }
  return { level, alpha, method, replicates, seed, multiplicity, preventive: spec.preventive ?? false, standardErrors, effectMeasure: implied, targetPower, continuousExposure: exposureType === 'continuous' };
}

/**
 * A continuous intervention has no reference level and no joint cells, so the additive
 * measures (RERI, AP, S, the joint table) and what serves only them do not apply
 * (shared/design/methods.md, "Rates, doses, absolute effects": additive measures need two
 * intervention levels and do not apply).
 */
function refuseForDose(spec: AnalysisSpec): void {
  const column = spec.exposure.column;
  const why = 'applies to the additive measures (RERI, AP, S), which do not apply to a continuous intervention';
  if (spec.ci.method === 'bootstrap') throw new InvalidSpecError(`The percentile bootstrap ${why}; use delta intervals.`, { column });
  if (spec.ci.method === 'mover') throw new InvalidSpecError(`MOVER ${why}; use delta intervals.`, { column });
  if (spec.preventive === true) throw new InvalidSpecError(`Preventive recoding ${why}.`, { column });
}

/** An ordered modifier must be categorical, with a finite score for each level, not all equal (shared/design/methods.md, "Rates, doses, absolute effects": trend). */
function checkOrdered(spec: AnalysisSpec): void {
  const ordered = spec.modifier.ordered;
  if (ordered === undefined) return;
  const column = spec.modifier.column;
  if (spec.modifier.type !== 'categorical') throw new InvalidSpecError('modifier.ordered applies to a categorical modifier only.', { column });
  const scores = ordered?.scores;
  if (scores === null || typeof scores !== 'object') throw new InvalidSpecError('modifier.ordered needs "scores": a number for each level.', { column });
  const values = Object.values(scores);
  if (values.length < 2 || values.some((value) => !Number.isFinite(value))) {
    throw new InvalidSpecError('modifier.ordered.scores must give a finite number for each level of the modifier.', { column });
  }
  if (values.every((value) => value === values[0])) throw new InvalidSpecError('modifier.ordered.scores must not all be equal.', { column });
}

/** The most modifiers one subgroup screen examines. */
export const SCREEN_MAX_MODIFIERS = 12;

/**
 * Checks a subgroup screen's "modifiers" list: 2 to 12 entries, each a distinct column with
 * a known type, none the intervention, the outcome or a covariate, and no single "modifier"
 * beside it. Each modifier's own analysis is then checked by validateSpec.
 *
 * @throws InvalidSpecError naming the offending field.
 */
export function validateScreenSpec(spec: AnySpec): void {
  if (spec === null || typeof spec !== 'object') throw new InvalidSpecError('The specification must be an object.');
  const modifiers: unknown = spec.modifiers;
  if (spec.modifier !== undefined && modifiers !== undefined) {
    throw new InvalidSpecError('Give either "modifier" (one modifier) or "modifiers" (a subgroup screen), not both.');
  }
  if (!Array.isArray(modifiers)) throw new InvalidSpecError('"modifiers" must be a list of modifiers, each with column, type and reference.');
  if (modifiers.length < 2 || modifiers.length > SCREEN_MAX_MODIFIERS) {
    throw new InvalidSpecError(`A subgroup screen needs between 2 and ${SCREEN_MAX_MODIFIERS} modifiers; this one has ${modifiers.length}.`);
  }
  const outcome = spec.outcome?.column;
  const exposure = spec.exposure?.column;
  const covariates = new Set(Array.isArray(spec.covariates) ? spec.covariates.map((covariate) => covariate.column) : []);
  const seen = new Set<string>();
  modifiers.forEach((modifier: unknown, index) => {
    const where = `modifiers[${index}]`;
    if (modifier === null || typeof modifier !== 'object') throw new InvalidSpecError(`${where} must be an object with column, type and reference.`);
    const { column, type, reference } = modifier as { column?: unknown; type?: unknown; reference?: unknown };
    if (typeof column !== 'string' || column === '') throw new InvalidSpecError(`${where}.column must be a column name.`);
    if (type !== 'categorical' && type !== 'continuous') throw new InvalidSpecError(`${where}.type must be "categorical" or "continuous".`, { column });
    if (reference !== undefined && typeof reference !== 'string') throw new InvalidSpecError(`${where}.reference must be a level name.`, { column });
    if (seen.has(column)) throw new InvalidSpecError(`The column "${column}" is listed twice among the modifiers; list each modifier once.`, { column });
    seen.add(column);
    if (column === exposure) throw new InvalidSpecError(`The intervention "${column}" cannot also be a modifier.`, { column });
    if (column === outcome) throw new InvalidSpecError(`The outcome "${column}" cannot also be a modifier.`, { column });
    if (covariates.has(column)) throw new InvalidSpecError(`"${column}" is both a modifier and a covariate; remove it from one of them.`, { column });
  });
}
