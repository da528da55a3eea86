/**
 * The analysis form's logic, free of React and the DOM: which columns each field may
 * offer (from the extract's confirmed dictionary and its column profile), the defaults,
 * per-field validation, conversion of the form's draft to the engine's specification
 * (SpecSchema), the model equation as structured parts, the specification in plain
 * English, and the list of what a run will compute.
 */
import { SpecSchema, type Spec } from '../../engine/boundary/schemas';
import { levelsLeftIn } from '../extracts/engineData';
import type { ColumnProfile, DictionaryEntry } from '../extracts/extracts.schema';

// ---------------------------------------------------------------------------------------
// Columns
// ---------------------------------------------------------------------------------------

export type ColumnKind = DictionaryEntry['type'];

/** One confirmed dictionary column with what the profile knows about its values. */
export interface FormColumn {
  name: string;
  type: ColumnKind;
  description: string;
  /** Levels in the profile's order (null for columns with many distinct numbers). */
  levels: string[] | null;
  /** True when the profile listed only the most frequent levels. */
  levelsTruncated: boolean;
  /** Summary of a numeric column (null for text columns). */
  numeric: { min: number; max: number; mean: number; sd: number | null; median: number } | null;
}

/** Joins the confirmed dictionary with the column profile (levels, numeric summary). */
export function formColumns(dictionary: readonly DictionaryEntry[], profile: readonly ColumnProfile[]): FormColumn[] {
  const byName = new Map(profile.map((column) => [column.name, column]));
  return dictionary.map((entry) => {
    const column = byName.get(entry.name);
    return {
      name: entry.name,
      type: entry.type,
      description: entry.description ?? '',
      levels: column?.levels ? levelsLeftIn(column.levels.map((level) => level.value), entry.missingValues) : null,
      levelsTruncated: column?.levelsTruncated ?? false,
      numeric: column?.numeric
        ? { min: column.numeric.min, max: column.numeric.max, mean: column.numeric.mean, sd: column.numeric.sd, median: column.numeric.median }
        : null,
    };
  });
}

const collator = new Intl.Collator('en', { numeric: true, sensitivity: 'base' });

/** Levels in natural order ("2" before "10", "18-44" before "45-64"). */
export function naturalOrder(levels: readonly string[]): string[] {
  return [...levels].sort((a, b) => collator.compare(a, b));
}

/** The reference level a form proposes: "0" where present, else the first in natural order. */
export function defaultReference(levels: readonly string[] | null): string {
  if (!levels || levels.length === 0) return '';
  if (levels.includes('0')) return '0';
  return naturalOrder(levels)[0];
}

/** Levels with the reference first and the rest in natural order. */
export function levelsFromReference(levels: readonly string[], reference: string): string[] {
  return [reference, ...naturalOrder(levels.filter((level) => level !== reference))];
}

// ---------------------------------------------------------------------------------------
// The draft the form edits
// ---------------------------------------------------------------------------------------

export type OutcomeType = Spec['outcome']['type'];
export type ModelFamily = Spec['model'];
export type EffectMeasure = NonNullable<Spec['effectMeasure']>;
export type CiMethod = Spec['ci']['method'];
export type Multiplicity = NonNullable<Spec['multiplicity']>;
export type CentreChoice = 'none' | 'mean' | 'median' | 'value';
export type SlopeChoice = 'sd' | 'percentiles' | 'values';

/**
 * The specification as the form holds it: numbers as the text the analyst typed (so a
 * half-typed value is never lost), the outcome's type chosen before its column.
 */
export interface SpecDraft {
  outcome: { type: OutcomeType; column: string; event: string };
  exposure: { column: string; reference: string };
  modifier: {
    column: string;
    reference: string;
    centre: CentreChoice;
    centreValue: string;
    slopes: SlopeChoice;
    /** Comma-separated percentiles or values. */
    slopeList: string;
  };
  covariates: string[];
  /** Reference level of each categorical covariate, by column. */
  covariateReferences: Record<string, string>;
  model: ModelFamily;
  effectMeasure: EffectMeasure;
  ciMethod: CiMethod;
  /** Percent, e.g. "95". */
  ciLevel: string;
  replicates: string;
  seed: string;
  alpha: string;
  multiplicity: Multiplicity;
  preventive: boolean;
}

/** The whole form: the words around the specification, and the specification. */
export interface AnalysisDraft {
  title: string;
  question: string;
  prespecified: boolean;
  spec: SpecDraft;
}

export const DEFAULT_REPLICATES = 2000;
export const DEFAULT_SEED = 1;

/** An empty form with the defaults: binary outcome, logistic, delta method, 95 %, α 0.05, Holm. */
export function defaultDraft(): AnalysisDraft {
  return {
    title: '',
    question: '',
    prespecified: false,
    spec: {
      outcome: { type: 'binary', column: '', event: '' },
      exposure: { column: '', reference: '' },
      modifier: { column: '', reference: '', centre: 'none', centreValue: '', slopes: 'sd', slopeList: '' },
      covariates: [],
      covariateReferences: {},
      model: 'logistic',
      effectMeasure: 'OR',
      ciMethod: 'delta',
      ciLevel: '95',
      replicates: String(DEFAULT_REPLICATES),
      seed: String(DEFAULT_SEED),
      alpha: '0.05',
      multiplicity: 'holm',
      preventive: false,
    },
  };
}

// ---------------------------------------------------------------------------------------
// Models and measures
// ---------------------------------------------------------------------------------------

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

// ---------------------------------------------------------------------------------------
// Choices
// ---------------------------------------------------------------------------------------

/** A column a select offers, possibly disabled with the reason. */
export interface ColumnChoice {
  name: string;
  type: ColumnKind;
  description: string;
  disabledReason?: string;
}

export interface FormChoices {
  /** Columns for the outcome of the chosen type (binary: binary; continuous: continuous or count). */
  outcomes: ColumnChoice[];
  /** Event levels of a binary outcome stored as text (empty for 0/1 outcomes). */
  eventLevels: string[];
  /** Binary or categorical columns; those without exactly two levels are disabled. */
  interventions: ColumnChoice[];
  exposureReferences: string[];
  /** Every analysable column other than the outcome and the intervention. */
  modifiers: ColumnChoice[];
  /** How the chosen modifier enters the model (null until one is chosen). */
  modifierType: 'categorical' | 'continuous' | null;
  modifierReferences: string[];
  /** Everything else, for adjustment. */
  covariates: (ColumnChoice & { levels: string[] | null; kind: 'categorical' | 'continuous' })[];
  models: ModelFamily[];
  measures: EffectMeasure[];
  ciMethods: CiMethod[];
}

function choice(column: FormColumn, disabledReason?: string): ColumnChoice {
  return { name: column.name, type: column.type, description: column.description, ...(disabledReason ? { disabledReason } : {}) };
}

/** How a column of a kind enters a model as a modifier or covariate. */
export function entryKind(type: ColumnKind): 'categorical' | 'continuous' {
  return type === 'binary' || type === 'categorical' ? 'categorical' : 'continuous';
}

/** Whether a binary outcome needs its event level named (text levels other than 0/1). */
function needsEventLevel(column: FormColumn | undefined): boolean {
  if (!column?.levels) return false;
  return !(column.levels.length === 2 && column.levels.includes('0') && column.levels.includes('1'));
}

/** The choices each field offers for the current draft. */
export function formChoices(columns: readonly FormColumn[], draft: SpecDraft): FormChoices {
  const byName = new Map(columns.map((column) => [column.name, column]));
  const outcome = byName.get(draft.outcome.column);
  const exposure = byName.get(draft.exposure.column);
  const modifier = byName.get(draft.modifier.column);
  const outcomeTypes: ColumnKind[] = draft.outcome.type === 'binary' ? ['binary'] : ['continuous', 'count'];
  const used = new Set([draft.outcome.column, draft.exposure.column, draft.modifier.column].filter(Boolean));

  const interventions = columns
    .filter((column) => (column.type === 'binary' || column.type === 'categorical') && column.name !== draft.outcome.column)
    .map((column) => {
      const count = column.levels?.length ?? 0;
      return choice(column, count === 2 && !column.levelsTruncated ? undefined : `needs exactly two levels (has ${column.levelsTruncated ? 'many' : count})`);
    });

  return {
    outcomes: columns.filter((column) => outcomeTypes.includes(column.type)).map((column) => choice(column)),
    eventLevels: draft.outcome.type === 'binary' && needsEventLevel(outcome) ? naturalOrder(outcome?.levels ?? []) : [],
    interventions,
    exposureReferences: exposure?.levels ? naturalOrder(exposure.levels) : [],
    modifiers: columns
      .filter((column) => column.name !== draft.outcome.column && column.name !== draft.exposure.column)
      .map((column) => choice(column, column.type === 'categorical' && column.levelsTruncated ? 'has too many levels to compare; band it first' : undefined)),
    modifierType: modifier ? entryKind(modifier.type) : null,
    modifierReferences: modifier && entryKind(modifier.type) === 'categorical' && modifier.levels ? naturalOrder(modifier.levels) : [],
    covariates: columns
      .filter((column) => !used.has(column.name))
      .map((column) => ({ ...choice(column), levels: column.levels ? naturalOrder(column.levels) : null, kind: entryKind(column.type) })),
    models: modelsFor(draft.outcome.type),
    measures: measuresFor(draft.outcome.type),
    ciMethods: ['delta', 'mover', 'bootstrap'],
  };
}

/**
 * Applies one change to a draft and keeps the rest consistent: a new outcome type resets
 * the outcome and the model; a new intervention or modifier proposes a reference level;
 * a column chosen for one role leaves the covariates; a measure picks its model.
 */
export function reviseDraft(columns: readonly FormColumn[], draft: SpecDraft, change: Partial<SpecDraft>): SpecDraft {
  const byName = new Map(columns.map((column) => [column.name, column]));
  const next: SpecDraft = {
    ...draft,
    ...change,
    outcome: { ...draft.outcome, ...change.outcome },
    exposure: { ...draft.exposure, ...change.exposure },
    modifier: { ...draft.modifier, ...change.modifier },
    covariateReferences: { ...draft.covariateReferences, ...change.covariateReferences },
  };
  if (change.outcome?.type !== undefined && change.outcome.type !== draft.outcome.type) {
    const allowed: ColumnKind[] = next.outcome.type === 'binary' ? ['binary'] : ['continuous', 'count'];
    const column = byName.get(next.outcome.column);
    if (!column || !allowed.includes(column.type)) next.outcome.column = '';
    next.outcome.event = '';
    next.model = modelsFor(next.outcome.type)[0];
    next.effectMeasure = measureFor(next.model, next.outcome.type);
  }
  if (change.outcome?.column !== undefined && change.outcome.column !== draft.outcome.column && change.outcome.event === undefined) {
    next.outcome.event = '';
  }
  // A new column keeps the reference given with it only when that is one of its levels.
  if (next.exposure.column !== draft.exposure.column) {
    const levels = byName.get(next.exposure.column)?.levels ?? null;
    if (!levels?.includes(next.exposure.reference)) next.exposure.reference = defaultReference(levels);
  }
  if (next.modifier.column !== draft.modifier.column) {
    const column = byName.get(next.modifier.column);
    const categorical = column !== undefined && entryKind(column.type) === 'categorical';
    if (!categorical) next.modifier.reference = '';
    else if (!column.levels?.includes(next.modifier.reference)) next.modifier.reference = defaultReference(column.levels);
  }
  if (change.model !== undefined && change.effectMeasure === undefined) next.effectMeasure = measureFor(change.model, next.outcome.type);
  if (change.effectMeasure !== undefined && change.model === undefined) {
    const model = defaultModelFor(change.effectMeasure);
    if (measureFor(next.model, next.outcome.type) !== change.effectMeasure) next.model = model;
  }
  const roles = new Set([next.outcome.column, next.exposure.column, next.modifier.column]);
  next.covariates = next.covariates.filter((name) => !roles.has(name) && byName.has(name));
  for (const name of next.covariates) {
    const column = byName.get(name);
    if (column && entryKind(column.type) === 'categorical' && !next.covariateReferences[name]) {
      next.covariateReferences[name] = defaultReference(column.levels);
    }
  }
  return next;
}

// ---------------------------------------------------------------------------------------
// Validation and conversion
// ---------------------------------------------------------------------------------------

/** Messages by field path ("title", "modifier.reference", "ci.replicates", "covariates.site.reference"). */
export type FieldErrors = Record<string, string>;

const NUMBER_TEXT = /^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/;

function parseNumber(text: string): number | null {
  const trimmed = text.trim();
  return NUMBER_TEXT.test(trimmed) ? Number(trimmed) : null;
}

function parseList(text: string): (number | null)[] {
  return text
    .split(/[,;\s]+/)
    .filter((part) => part !== '')
    .map(parseNumber);
}

export type ConversionResult = { ok: true; spec: Spec } | { ok: false; errors: FieldErrors };

/**
 * Validates a draft and converts it to the engine's specification. Field messages say what
 * to do; the spec returned always parses under SpecSchema (a failure there is reported
 * under the field it names).
 */
export function draftToSpec(columns: readonly FormColumn[], draft: SpecDraft): ConversionResult {
  const errors: FieldErrors = {};
  const byName = new Map(columns.map((column) => [column.name, column]));
  const outcome = byName.get(draft.outcome.column);
  const exposure = byName.get(draft.exposure.column);
  const modifier = byName.get(draft.modifier.column);

  if (!outcome) errors['outcome.column'] = 'Choose the outcome.';
  else if (draft.outcome.type === 'binary' && outcome.type !== 'binary') errors['outcome.column'] = `${outcome.name} is not a binary column.`;
  else if (draft.outcome.type === 'continuous' && outcome.type !== 'continuous' && outcome.type !== 'count') {
    errors['outcome.column'] = `${outcome.name} is not a continuous or count column.`;
  }
  const eventNeeded = outcome !== undefined && draft.outcome.type === 'binary' && needsEventLevel(outcome);
  if (eventNeeded && !outcome.levels?.includes(draft.outcome.event)) errors['outcome.event'] = 'Choose the level that counts as the event.';

  if (!exposure) errors['exposure.column'] = 'Choose the intervention.';
  else if (exposure.name === outcome?.name) errors['exposure.column'] = 'The intervention cannot also be the outcome.';
  else if (exposure.type !== 'binary' && exposure.type !== 'categorical') errors['exposure.column'] = `${exposure.name} is not binary or categorical.`;
  else if ((exposure.levels?.length ?? 0) !== 2 || exposure.levelsTruncated) {
    errors['exposure.column'] = `The intervention needs exactly two levels; ${exposure.name} has ${exposure.levelsTruncated ? 'many' : (exposure.levels?.length ?? 0)}.`;
  }
  if (exposure && !errors['exposure.column'] && !exposure.levels?.includes(draft.exposure.reference)) {
    errors['exposure.reference'] = 'Choose the reference level (usually "no intervention").';
  }

  let modifierType: 'categorical' | 'continuous' = 'categorical';
  if (!modifier) errors['modifier.column'] = 'Choose the modifier.';
  else if (modifier.name === outcome?.name || modifier.name === exposure?.name) errors['modifier.column'] = 'The modifier must differ from the outcome and the intervention.';
  else {
    modifierType = entryKind(modifier.type);
    if (modifierType === 'categorical') {
      if (modifier.levelsTruncated) errors['modifier.column'] = `${modifier.name} has too many levels to compare; band it into a few groups first.`;
      else if ((modifier.levels?.length ?? 0) < 2) errors['modifier.column'] = `${modifier.name} needs at least two levels.`;
      else if (!modifier.levels?.includes(draft.modifier.reference)) errors['modifier.reference'] = 'Choose the reference level of the modifier.';
    }
  }

  let centre: 'none' | 'mean' | 'median' | number = draft.modifier.centre === 'value' ? 0 : draft.modifier.centre;
  let slopesAt: NonNullable<Spec['modifier']['slopesAt']> = { kind: 'sd' };
  if (modifier && modifierType === 'continuous') {
    if (draft.modifier.centre === 'value') {
      const value = parseNumber(draft.modifier.centreValue);
      if (value === null) errors['modifier.centre'] = 'Type the value to centre on, e.g. 5.';
      else centre = value;
    }
    if (draft.modifier.slopes !== 'sd') {
      const list = parseList(draft.modifier.slopeList);
      const numbers = list.filter((value): value is number => value !== null);
      if (list.length === 0) errors['modifier.slopesAt'] = `List the ${draft.modifier.slopes === 'percentiles' ? 'percentiles' : 'values'}, separated by commas.`;
      else if (numbers.length !== list.length) errors['modifier.slopesAt'] = 'Use numbers only, separated by commas.';
      else if (list.length > 20) errors['modifier.slopesAt'] = 'List at most 20.';
      else if (draft.modifier.slopes === 'percentiles' && numbers.some((value) => value < 0 || value > 100)) {
        errors['modifier.slopesAt'] = 'Percentiles lie between 0 and 100.';
      } else if (draft.modifier.slopes === 'percentiles') slopesAt = { kind: 'percentiles', percentiles: numbers };
      else {
        const range = modifier.numeric;
        const outside = range ? numbers.filter((value) => value < range.min || value > range.max) : [];
        if (outside.length > 0 && range) errors['modifier.slopesAt'] = `${outside.join(', ')} lies outside the observed range (${range.min} to ${range.max}).`;
        else slopesAt = { kind: 'values', values: numbers };
      }
    }
  }

  const covariates: Spec['covariates'] = [];
  for (const name of draft.covariates) {
    const column = byName.get(name);
    if (!column) {
      errors.covariates = `${name} is not in this extract.`;
      continue;
    }
    if (name === outcome?.name || name === exposure?.name || name === modifier?.name) {
      errors.covariates = `${name} already has a role; it cannot also be a covariate.`;
      continue;
    }
    const kind = entryKind(column.type);
    if (kind === 'continuous') {
      covariates.push({ column: name, type: 'continuous' });
      continue;
    }
    const reference = draft.covariateReferences[name] ?? '';
    if (column.levels && !column.levels.includes(reference)) errors[`covariates.${name}.reference`] = `Choose the reference level of ${name}.`;
    covariates.push({ column: name, type: 'categorical', ...(reference ? { reference } : {}) });
  }

  if (!modelsFor(draft.outcome.type).includes(draft.model)) errors.model = `A ${draft.outcome.type} outcome cannot use ${MODEL_LABEL[draft.model].toLowerCase()}.`;
  const implied = measureFor(draft.model, draft.outcome.type);
  if (draft.effectMeasure !== implied) {
    errors.effectMeasure = `${MODEL_LABEL[draft.model]} gives the ${MEASURE_LABEL[implied]}; choose it or another model.`;
  }

  const levelPercent = parseNumber(draft.ciLevel);
  if (levelPercent === null || !(levelPercent > 50 && levelPercent < 100)) errors['ci.level'] = 'Use a level between 50 and 100 percent, e.g. 95.';
  let replicates: number | undefined;
  let seed: number | undefined;
  if (draft.ciMethod === 'bootstrap') {
    const r = parseNumber(draft.replicates);
    if (r === null || !Number.isInteger(r) || r < 100 || r > 100_000) errors['ci.replicates'] = 'Use a whole number of replicates from 100 to 100,000.';
    else replicates = r;
    const s = parseNumber(draft.seed);
    if (s === null || !Number.isInteger(s) || s < 0 || s > 0xffffffff) errors['ci.seed'] = 'Use a whole number from 0 to 4294967295.';
    else seed = s;
  }
  const alpha = parseNumber(draft.alpha);
  if (alpha === null || !(alpha > 0 && alpha < 0.5)) errors.alpha = 'Use a level between 0 and 0.5, e.g. 0.05.';

  if (Object.keys(errors).length > 0) return { ok: false, errors };

  const spec: Spec = {
    outcome: {
      column: draft.outcome.column,
      type: draft.outcome.type,
      ...(eventNeeded ? { event: draft.outcome.event } : {}),
    },
    exposure: { column: draft.exposure.column, reference: draft.exposure.reference },
    modifier:
      modifierType === 'categorical'
        ? { column: draft.modifier.column, type: 'categorical', reference: draft.modifier.reference }
        : { column: draft.modifier.column, type: 'continuous', centre, slopesAt },
    covariates,
    model: draft.model,
    ci: {
      // Percent to proportion without binary noise: 95 → 0.95, not 0.9500000000000001.
      level: Number(((levelPercent as number) / 100).toPrecision(12)),
      method: draft.ciMethod,
      ...(replicates !== undefined ? { replicates } : {}),
      ...(seed !== undefined ? { seed } : {}),
    },
    effectMeasure: draft.effectMeasure,
    alpha: alpha as number,
    multiplicity: draft.multiplicity,
    preventive: draft.preventive,
  };
  const parsed = SpecSchema.safeParse(spec);
  if (!parsed.success) {
    const schemaErrors: FieldErrors = {};
    for (const issue of parsed.error.issues) schemaErrors[issue.path.join('.') || 'spec'] = issue.message;
    return { ok: false, errors: schemaErrors };
  }
  return { ok: true, spec: parsed.data };
}

/** Validation messages of the whole form (the words and the specification). */
export function validateAnalysis(columns: readonly FormColumn[], draft: AnalysisDraft): FieldErrors {
  const errors: FieldErrors = {};
  if (draft.title.trim() === '') errors.title = 'Give the analysis a title.';
  else if (draft.title.length > 200) errors.title = 'Keep the title under 200 characters.';
  if (draft.question.trim() === '') errors.question = 'Write the question in plain words, e.g. "Does the call-back help older patients more?"';
  else if (draft.question.length > 4000) errors.question = 'Keep the question under 4,000 characters.';
  const converted = draftToSpec(columns, draft.spec);
  return converted.ok ? errors : { ...errors, ...converted.errors };
}

/** A draft from a stored specification (to edit an analysis). */
export function specToDraft(spec: Spec, columns: readonly FormColumn[]): SpecDraft {
  const base = defaultDraft().spec;
  const byName = new Map(columns.map((column) => [column.name, column]));
  const centre = spec.modifier.centre ?? 'none';
  const slopes = spec.modifier.slopesAt ?? { kind: 'sd' as const };
  const covariateReferences: Record<string, string> = {};
  for (const covariate of spec.covariates) {
    if (covariate.type === 'categorical') covariateReferences[covariate.column] = covariate.reference ?? defaultReference(byName.get(covariate.column)?.levels ?? null);
  }
  return {
    ...base,
    outcome: { type: spec.outcome.type, column: spec.outcome.column, event: spec.outcome.event ?? '' },
    exposure: { ...spec.exposure },
    modifier: {
      column: spec.modifier.column,
      reference: spec.modifier.reference ?? '',
      centre: typeof centre === 'number' ? 'value' : centre,
      centreValue: typeof centre === 'number' ? String(centre) : '',
      slopes: slopes.kind,
      slopeList: slopes.kind === 'percentiles' ? slopes.percentiles.join(', ') : slopes.kind === 'values' ? slopes.values.join(', ') : '',
    },
    covariates: spec.covariates.map((covariate) => covariate.column),
    covariateReferences,
    model: spec.model,
    effectMeasure: spec.effectMeasure ?? measureFor(spec.model, spec.outcome.type),
    ciMethod: spec.ci.method,
    ciLevel: String(Number((spec.ci.level * 100).toPrecision(12))),
    replicates: String(spec.ci.replicates ?? DEFAULT_REPLICATES),
    seed: String(spec.ci.seed ?? DEFAULT_SEED),
    alpha: String(spec.alpha ?? Number((1 - spec.ci.level).toPrecision(12))),
    multiplicity: spec.multiplicity ?? 'holm',
    preventive: spec.preventive ?? false,
  };
}

/**
 * The form field a server validation path belongs to: "spec.modifier.reference" →
 * "modifier.reference"; "spec.covariates.2.reference" → "covariates.<name>.reference"
 * using the submitted specification's covariate order.
 */
export function fieldForServerPath(path: string, spec?: Spec): string {
  const local = path.startsWith('spec.') ? path.slice(5) : path;
  const covariate = /^covariates\.(\d+)(?:\.(\w+))?/.exec(local);
  if (covariate) {
    const name = spec?.covariates[Number(covariate[1])]?.column;
    if (name && covariate[2] === 'reference') return `covariates.${name}.reference`;
    return 'covariates';
  }
  if (local === 'ci.level' || local === 'ci.method' || local === 'ci.replicates' || local === 'ci.seed') return local;
  if (/^modifier\.slopesAt/.test(local)) return 'modifier.slopesAt';
  return local;
}

// ---------------------------------------------------------------------------------------
// The model equation
// ---------------------------------------------------------------------------------------

/** A factor of one equation term: a variable, or an indicator of one of its levels. */
export type EquationFactor =
  | { kind: 'variable'; column: string; centre?: 'mean' | 'median' | number }
  | { kind: 'indicator'; column: string; level: string }
  /** One indicator per level other than the reference, when a column has many (coefficients numbered as a range). */
  | { kind: 'indicators'; column: string; reference: string; count: number };

export interface EquationTerm {
  role: 'intercept' | 'intervention' | 'modifier' | 'product' | 'covariate';
  /** Subscript of β; a range [first, last] for a collapsed set of indicators. */
  coefficient: number | [number, number];
  factors: EquationFactor[];
}

export interface ModelEquation {
  /** Link applied to the left side. */
  link: 'logit' | 'log' | 'identity';
  /** P(outcome = event) for binary outcomes; E(outcome) for continuous ones. */
  left: { kind: 'probability'; column: string; event: string } | { kind: 'mean'; column: string };
  terms: EquationTerm[];
  /** What a reader needs beside the formula (reference levels, centring, collapsed levels). */
  notes: string[];
}

/** Categorical columns with more non-reference levels than this are written as one indicator set. */
const MAX_LISTED_LEVELS = 4;

function factorTerms(
  column: string,
  reference: string,
  levels: readonly string[] | null,
): { factors: EquationFactor[]; count: number; collapsed: boolean } {
  const others = levels ? levelsFromReference(levels, reference).slice(1) : [];
  if (others.length === 0 || others.length > MAX_LISTED_LEVELS) {
    return { factors: [{ kind: 'indicators', column, reference, count: Math.max(others.length, 1) }], count: Math.max(others.length, 1), collapsed: true };
  }
  return { factors: others.map((level) => ({ kind: 'indicator', column, level })), count: others.length, collapsed: false };
}

/** Whether a 0/1 column with reference 0 can be written as the plain variable. */
function isZeroOne(levels: readonly string[] | null, reference: string): boolean {
  return reference === '0' && levels !== null && levels.length === 2 && levels.includes('0') && levels.includes('1');
}

/**
 * The model as an equation: link(left side) = β0 + β1·intervention + modifier terms +
 * product terms + covariate terms, with reference (treatment) coding as the engine uses it.
 */
export function modelEquation(spec: Spec, columns: readonly FormColumn[]): ModelEquation {
  const byName = new Map(columns.map((column) => [column.name, column]));
  const link = spec.model === 'logistic' ? 'logit' : spec.model === 'linear' ? 'identity' : 'log';
  const outcomeColumn = byName.get(spec.outcome.column);
  const event = spec.outcome.event ?? (outcomeColumn?.levels?.includes('1') || !outcomeColumn?.levels ? '1' : (outcomeColumn.levels[1] ?? '1'));
  const left: ModelEquation['left'] =
    spec.outcome.type === 'binary' ? { kind: 'probability', column: spec.outcome.column, event } : { kind: 'mean', column: spec.outcome.column };
  const notes: string[] = [];
  const terms: EquationTerm[] = [{ role: 'intercept', coefficient: 0, factors: [] }];
  let next = 1;

  const exposureLevels = byName.get(spec.exposure.column)?.levels ?? null;
  const exposureOther = exposureLevels?.find((level) => level !== spec.exposure.reference) ?? '1';
  const exposureFactor: EquationFactor = isZeroOne(exposureLevels, spec.exposure.reference)
    ? { kind: 'variable', column: spec.exposure.column }
    : { kind: 'indicator', column: spec.exposure.column, level: exposureOther };
  terms.push({ role: 'intervention', coefficient: next++, factors: [exposureFactor] });
  notes.push(`${spec.exposure.column}: reference level ${spec.exposure.reference}.`);

  let modifierFactors: EquationFactor[];
  if (spec.modifier.type === 'categorical') {
    const levels = byName.get(spec.modifier.column)?.levels ?? null;
    const reference = spec.modifier.reference ?? defaultReference(levels);
    if (isZeroOne(levels, reference)) modifierFactors = [{ kind: 'variable', column: spec.modifier.column }];
    else modifierFactors = factorTerms(spec.modifier.column, reference, levels).factors;
    notes.push(`${spec.modifier.column}: reference level ${reference}.`);
  } else {
    const centre = spec.modifier.centre ?? 'none';
    modifierFactors = [{ kind: 'variable', column: spec.modifier.column, ...(centre === 'none' ? {} : { centre }) }];
    if (centre !== 'none') notes.push(`${spec.modifier.column} is centred on ${typeof centre === 'number' ? centre : `its ${centre}`} before forming the product.`);
  }
  for (const factor of modifierFactors) {
    const count = factor.kind === 'indicators' ? factor.count : 1;
    terms.push({ role: 'modifier', coefficient: count > 1 ? [next, next + count - 1] : next, factors: [factor] });
    next += count;
  }
  for (const factor of modifierFactors) {
    const count = factor.kind === 'indicators' ? factor.count : 1;
    terms.push({ role: 'product', coefficient: count > 1 ? [next, next + count - 1] : next, factors: [exposureFactor, factor] });
    next += count;
  }

  for (const covariate of spec.covariates) {
    if (covariate.type === 'continuous') {
      terms.push({ role: 'covariate', coefficient: next++, factors: [{ kind: 'variable', column: covariate.column }] });
      continue;
    }
    const levels = byName.get(covariate.column)?.levels ?? null;
    const reference = covariate.reference ?? defaultReference(levels);
    if (isZeroOne(levels, reference)) {
      terms.push({ role: 'covariate', coefficient: next++, factors: [{ kind: 'variable', column: covariate.column }] });
      continue;
    }
    const { factors, count, collapsed } = factorTerms(covariate.column, reference, levels);
    if (collapsed) {
      terms.push({ role: 'covariate', coefficient: count > 1 ? [next, next + count - 1] : next, factors });
      next += count;
      notes.push(`${covariate.column}: one term for each level other than ${reference}.`);
    } else {
      for (const factor of factors) terms.push({ role: 'covariate', coefficient: next++, factors: [factor] });
      notes.push(`${covariate.column}: reference level ${reference}.`);
    }
  }
  return { link, left, terms, notes };
}

function factorText(factor: EquationFactor): string {
  if (factor.kind === 'variable') {
    if (factor.centre === undefined) return factor.column;
    return `(${factor.column} − ${typeof factor.centre === 'number' ? factor.centre : factor.centre})`;
  }
  if (factor.kind === 'indicator') return `[${factor.column} = ${factor.level}]`;
  return `[${factor.column} = each level ≠ ${factor.reference}]`;
}

function coefficientText(coefficient: EquationTerm['coefficient']): string {
  return typeof coefficient === 'number' ? `β${coefficient}` : `β${coefficient[0]}–${coefficient[1]}`;
}

/** The equation as one line of text (for screen readers, copying and tests). */
export function equationText(equation: ModelEquation): string {
  const inner = equation.left.kind === 'probability' ? `P(${equation.left.column} = ${equation.left.event})` : `E(${equation.left.column})`;
  const left = equation.link === 'identity' ? inner : `${equation.link}(${inner})`;
  const right = equation.terms
    .map((term) => (term.factors.length === 0 ? coefficientText(term.coefficient) : `${coefficientText(term.coefficient)}·${term.factors.map(factorText).join('×')}`))
    .join(' + ');
  return `${left} = ${right}`;
}

// ---------------------------------------------------------------------------------------
// Words
// ---------------------------------------------------------------------------------------

/** How a column is named in prose: its short description where it has one, else its name. */
export function columnLabel(name: string, columns?: readonly FormColumn[]): string {
  const description = columns?.find((column) => column.name === name)?.description.trim() ?? '';
  return description !== '' && description.length <= 48 && !/[.\n]/.test(description) ? description : name;
}

function listInWords(items: readonly string[]): string {
  if (items.length <= 1) return items.join('');
  return `${items.slice(0, -1).join(', ')} and ${items[items.length - 1]}`;
}

/** A percentage without binary noise: 0.95 → "95", 0.050000000000000044 → "5". */
export function percentText(proportion: number): string {
  return String(Number((proportion * 100).toPrecision(10)));
}

export interface WordsContext {
  /** Dictionary columns, for short descriptions and the modifier's number of levels. */
  columns?: readonly FormColumn[];
  /** The modifier's levels as the run saw them (from the result), when known. */
  modifierLevels?: readonly string[] | null;
}

function slopesInWords(slopes: NonNullable<Spec['modifier']['slopesAt']>): string {
  if (slopes.kind === 'sd') return 'the mean and one standard deviation either side';
  if (slopes.kind === 'percentiles') return `the ${listInWords(slopes.percentiles.map((p) => `${p}th`))} percentiles`;
  return listInWords(slopes.values.map(String));
}

/**
 * The specification in plain English, e.g. "Logistic regression of readmitted_30d on
 * call_back (reference 0), its product with age_band (reference 18-44), adjusted for sex,
 * comorbidity_score and site; effects as odds ratios; 95 % delta-method intervals; tests
 * at the 5 % level; Holm adjustment across 4 strata."
 */
export function specInWords(spec: Spec, context: WordsContext = {}): string {
  const label = (name: string) => columnLabel(name, context.columns);
  const outcome = spec.outcome.event ? `${label(spec.outcome.column)} (event: ${spec.outcome.event})` : label(spec.outcome.column);
  const parts: string[] = [];
  const model = MODEL_LABEL[spec.model];
  const centre = spec.modifier.centre ?? 'none';
  const modifierPart =
    spec.modifier.type === 'categorical'
      ? `its product with ${label(spec.modifier.column)} (reference ${spec.modifier.reference ?? 'the first level'})`
      : `its product with ${label(spec.modifier.column)} as a continuous modifier${centre === 'none' ? '' : ` centred on ${typeof centre === 'number' ? centre : `its ${centre}`}`}`;
  const covariates = spec.covariates.map((covariate) => label(covariate.column));
  parts.push(
    `${model} of ${outcome} on ${label(spec.exposure.column)} (reference ${spec.exposure.reference}), ${modifierPart}, ${covariates.length > 0 ? `adjusted for ${listInWords(covariates)}` : 'with no adjustment for other covariates'}`,
  );
  const measure = spec.effectMeasure ?? measureFor(spec.model, spec.outcome.type);
  parts.push(`effects as ${MEASURE_LABEL[measure]}s`);
  const method = spec.ci.method === 'bootstrap'
    ? `percentile-bootstrap intervals from ${(spec.ci.replicates ?? DEFAULT_REPLICATES).toLocaleString('en-GB')} replicates (seed ${spec.ci.seed ?? DEFAULT_SEED})`
    : spec.ci.method === 'mover'
      ? 'MOVER intervals for RERI and delta-method intervals otherwise'
      : 'delta-method intervals';
  parts.push(`${percentText(spec.ci.level)} % ${method}`);
  parts.push(`tests at the ${percentText(spec.alpha ?? 1 - spec.ci.level)} % level`);
  if (spec.modifier.type === 'categorical') {
    const levels = context.modifierLevels ?? context.columns?.find((column) => column.name === spec.modifier.column)?.levels ?? null;
    const strata = levels ? `${levels.length} strata` : 'the strata';
    const multiplicity = spec.multiplicity ?? 'holm';
    parts.push(multiplicity === 'none' ? `no adjustment for multiple comparisons across ${strata}` : `${MULTIPLICITY_LABEL[multiplicity]} adjustment across ${strata}`);
  } else {
    parts.push(`simple slopes at ${slopesInWords(spec.modifier.slopesAt ?? { kind: 'sd' })}, with Johnson-Neyman boundaries`);
  }
  if (spec.preventive) parts.push('additive measures recoded for a preventive intervention');
  return `${parts.join('; ')}.`;
}

/** One line of the "what will be computed" panel. */
export interface ComputationItem {
  title: string;
  detail: string;
}

/** What a run of this specification will compute, shown before running. */
export function computationSummary(spec: Spec, columns: readonly FormColumn[]): ComputationItem[] {
  const byName = new Map(columns.map((column) => [column.name, column]));
  const measure = spec.effectMeasure ?? measureFor(spec.model, spec.outcome.type);
  const measureName = MEASURE_LABEL[measure];
  const ratio = isRatioModel(spec.model);
  const items: ComputationItem[] = [];
  const covariateCount = spec.covariates.length;
  items.push({
    title: 'Model',
    detail: `${MODEL_LABEL[spec.model]} with ${covariateCount === 0 ? 'no covariates' : `${covariateCount} covariate${covariateCount === 1 ? '' : 's'}`}${spec.model === 'log-binomial' ? '; if it does not converge the engine falls back to modified Poisson and says so' : ''}.`,
  });
  const level = `${percentText(spec.ci.level)} %`;
  if (spec.modifier.type === 'categorical') {
    const levels = byName.get(spec.modifier.column)?.levels ?? [];
    const reference = spec.modifier.reference ?? defaultReference(levels);
    const ordered = levels.length > 0 ? levelsFromReference(levels, reference) : [];
    const others = ordered.slice(1);
    const k = ordered.length;
    items.push({
      title: 'Effect within each stratum',
      detail: `The ${measureName} of ${spec.exposure.column} within each of ${k > 0 ? `the ${k} levels` : 'the levels'} of ${spec.modifier.column}${ordered.length > 0 ? ` (${ordered.join(', ')})` : ''}, with ${level} intervals and ${MULTIPLICITY_LABEL[spec.multiplicity ?? 'holm']}-adjusted p-values.`,
    });
    items.push({
      title: 'Joint effects',
      detail: `${k > 0 ? `All ${2 * k}` : 'All'} combinations of ${spec.exposure.column} and ${spec.modifier.column} against one reference (${spec.exposure.column} = ${spec.exposure.reference}, ${spec.modifier.column} = ${reference}), with counts.`,
    });
    items.push({
      title: 'Interaction on the multiplicative scale',
      detail: ratio
        ? `The ratio of ${measureName}s for each of ${others.length > 0 ? others.join(', ') : 'the other levels'} against ${reference}, and an omnibus ${spec.model === 'modified-poisson' ? 'robust Wald' : 'likelihood-ratio'} test of all product terms together.`
        : `The difference in differences for each level against ${reference}, and an omnibus F test of all product terms together.`,
    });
    if (ratio) {
      items.push({
        title: 'Interaction on the additive scale',
        detail: `RERI, AP, AP* and S for each level against ${reference}, with ${CI_METHOD_LABEL[spec.ci.method]} intervals${spec.preventive ? ', each recoded so that the lowest-risk combination is the reference' : ''}.`,
      });
    }
    if (spec.outcome.type === 'binary') {
      items.push({ title: 'Stratified tables', detail: 'Crude 2 × 2 tables per level with Mantel-Haenszel pooled estimates and tests of homogeneity (Breslow-Day with Tarone\'s correction, Woolf).' });
    }
  } else {
    const slopes = spec.modifier.slopesAt ?? { kind: 'sd' };
    items.push({
      title: 'Simple slopes',
      detail: `The ${measureName} of ${spec.exposure.column} at ${slopesInWords(slopes)} of ${spec.modifier.column}, with ${level} intervals.`,
    });
    items.push({
      title: 'Johnson-Neyman boundaries',
      detail: `Where along ${spec.modifier.column} the effect of ${spec.exposure.column} is significant at the ${percentText(spec.alpha ?? 1 - spec.ci.level)} % level, with the band across the observed range for the plot.`,
    });
    items.push({
      title: 'Interaction',
      detail: ratio
        ? `The ratio of ${measureName}s per unit of ${spec.modifier.column}; RERI, AP and S for one standard deviation above the mean; an omnibus test of the product term.`
        : `The change in the mean difference per unit of ${spec.modifier.column} and for one standard deviation above the mean; an F test of the product term.`,
    });
  }
  if (spec.ci.method === 'bootstrap') {
    items.push({
      title: 'Bootstrap',
      detail: `${(spec.ci.replicates ?? DEFAULT_REPLICATES).toLocaleString('en-GB')} resamples with seed ${spec.ci.seed ?? DEFAULT_SEED}; each refits the model, so this step takes the longest. The same seed reproduces the same intervals.`,
    });
  }
  items.push({ title: 'Power', detail: 'The smallest interaction these data could detect with 80 % power, and the power for an interaction as large as the main effect.' });
  return items;
}
