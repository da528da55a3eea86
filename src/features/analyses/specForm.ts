/**
 * The analysis form's state, free of React and the DOM: the draft the analyst edits, its
 * defaults, the choices each field offers for the current draft, how one change keeps the
 * rest consistent, and a draft from a stored specification. Validation and conversion to
 * the engine's specification are in specValidation.ts.
 */
import type { Spec } from '@/engine/boundary/schemas';
import { extrasChoices, type ExtrasChoices } from './extrasRules';
import { defaultReference, entryKind, naturalOrder, needsEventLevel, type ColumnKind, type FormColumn } from './formColumns';
import {
  DEFAULT_REPLICATES, DEFAULT_SEED, MEASURES, MODELS, measureFor, measureRefusal, modelRefusal,
  type CiMethod, type EffectMeasure, type ModelFamily, type Multiplicity, type OutcomeType,
} from './specRules';

export type CentreChoice = 'none' | 'mean' | 'median' | 'value';
export type SlopeChoice = 'sd' | 'percentiles' | 'values';
/** Where a new analysis reports a continuous modifier's effect: percentiles across the range. */
export const DEFAULT_PERCENTILES = '10, 25, 50, 75, 90';

/**
 * The specification as the form holds it: numbers as the text the analyst typed (so a
 * half-typed value is never lost), the outcome's type chosen before its column.
 */
export interface SpecDraft {
  /** personTime: the person-time column of a count outcome ('' for none). */
  outcome: { type: OutcomeType; column: string; event: string; personTime?: string };
  /** type: a binary intervention (two levels, one the reference) or a continuous one (a dose). */
  exposure: { column: string; reference: string; type: 'binary' | 'continuous' };
  modifier: {
    column: string;
    reference: string;
    centre: CentreChoice;
    centreValue: string;
    slopes: SlopeChoice;
    /** Comma-separated percentiles, or values each with an optional name ("3 = mild, 5 = moderate"). */
    slopeList: string;
    /** An ordered modifier (scores in the dictionary): add the test for trend with those scores. */
    trend: boolean;
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
  /** Standardized absolute effects (binary outcome, categorical modifier). */
  standardize: boolean;
  /** Cluster column for cluster-robust standard errors ('' for none). */
  cluster: string;
  /** Frequency-weights column ('' for none). */
  weights: string;
  /** Robust (HC0) standard errors for the Poisson model. */
  robust: boolean;
}

/** The whole form: the words around the specification, and the specification. */
export interface AnalysisDraft {
  title: string;
  question: string;
  prespecified: boolean;
  spec: SpecDraft;
}

/** An empty form with the defaults: binary outcome, logistic, delta method, 95 %, α 0.05, Holm. */
export function defaultDraft(): AnalysisDraft {
  return {
    title: '',
    question: '',
    prespecified: false,
    spec: {
      outcome: { type: 'binary', column: '', event: '', personTime: '' },
      exposure: { column: '', reference: '', type: 'binary' },
      modifier: { column: '', reference: '', centre: 'none', centreValue: '', slopes: 'percentiles', slopeList: DEFAULT_PERCENTILES, trend: true },
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
      standardize: false,
      cluster: '',
      weights: '',
      robust: false,
    },
  };
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
  /** Binary intervention: binary or categorical columns (those without exactly two levels disabled); continuous: continuous or count columns. */
  interventions: ColumnChoice[];
  /** Scores of the chosen modifier when the dictionary declares it ordered, else null. */
  modifierScores: Record<string, number> | null;
  exposureReferences: string[];
  /** Every analysable column other than the outcome and the intervention. */
  modifiers: ColumnChoice[];
  /** How the chosen modifier enters the model (null until one is chosen). */
  modifierType: 'categorical' | 'continuous' | null;
  modifierReferences: string[];
  /** Everything else, for adjustment. */
  covariates: (ColumnChoice & { levels: string[] | null; kind: 'categorical' | 'continuous' })[];
  /** Every model; those saving would refuse for the outcome type carry the reason. */
  models: { value: ModelFamily; disabledReason?: string }[];
  /** Every measure; those the chosen model does not give carry the reason. */
  measures: { value: EffectMeasure; disabledReason?: string }[];
  ciMethods: CiMethod[];
  /** Columns for the cluster, weights and person-time fields. */
  extras: ExtrasChoices;
}

function choice(column: FormColumn, disabledReason?: string): ColumnChoice {
  return { name: column.name, type: column.type, description: column.description, ...(disabledReason ? { disabledReason } : {}) };
}

function withReason<T>(value: T, reason: string | null): { value: T; disabledReason?: string } {
  return reason === null ? { value } : { value, disabledReason: reason };
}

/** The choices each field offers for the current draft. */
export function formChoices(columns: readonly FormColumn[], draft: SpecDraft): FormChoices {
  const byName = new Map(columns.map((column) => [column.name, column]));
  const outcome = byName.get(draft.outcome.column);
  const exposure = byName.get(draft.exposure.column);
  const modifier = byName.get(draft.modifier.column);
  const outcomeTypes = outcomeColumnTypes(draft.outcome.type);
  const used = new Set([draft.outcome.column, draft.exposure.column, draft.modifier.column].filter(Boolean));

  const interventions =
    draft.exposure.type === 'continuous'
      ? columns.filter((column) => (column.type === 'continuous' || column.type === 'count') && column.name !== draft.outcome.column).map((column) => choice(column))
      : columns
          .filter((column) => (column.type === 'binary' || column.type === 'categorical') && column.name !== draft.outcome.column)
          .map((column) => {
            const count = column.levels?.length ?? 0;
            return choice(column, count === 2 && !column.levelsTruncated ? undefined : `needs exactly two levels (has ${column.levelsTruncated ? 'many' : count})`);
          });

  return {
    outcomes: columns.filter((column) => outcomeTypes.includes(column.type)).map((column) => choice(column)),
    eventLevels: draft.outcome.type === 'binary' && needsEventLevel(outcome) ? naturalOrder(outcome?.levels ?? []) : [],
    interventions,
    exposureReferences: draft.exposure.type === 'binary' && exposure?.levels ? naturalOrder(exposure.levels) : [],
    modifierScores: modifier && entryKind(modifier.type) === 'categorical' ? (modifier.ordered ?? null) : null,
    modifiers: columns
      .filter((column) => column.name !== draft.outcome.column && column.name !== draft.exposure.column)
      .map((column) => choice(column, column.type === 'categorical' && column.levelsTruncated ? 'has too many levels to compare; band it first' : undefined)),
    modifierType: modifier ? entryKind(modifier.type) : null,
    modifierReferences: modifier && entryKind(modifier.type) === 'categorical' && modifier.levels ? naturalOrder(modifier.levels) : [],
    covariates: columns
      .filter((column) => !used.has(column.name))
      .map((column) => ({ ...choice(column), levels: column.levels ? naturalOrder(column.levels) : null, kind: entryKind(column.type) })),
    models: MODELS.map((value) => withReason(value, modelRefusal(draft.outcome.type, value))),
    measures: MEASURES.map((value) => withReason(value, measureRefusal(draft.outcome.type, draft.model, value))),
    // MOVER and the bootstrap serve the additive measures, which a continuous intervention does not have.
    ciMethods: draft.exposure.type === 'continuous' ? ['delta'] : ['delta', 'mover', 'bootstrap'],
    extras: extrasChoices(columns, [draft.outcome.column, draft.exposure.column, draft.modifier.column]),
  };
}

/**
 * Applies one change to a draft and keeps the rest consistent without changing another
 * choice behind the analyst's back: a new outcome type clears an outcome column of the
 * other type; a new intervention or modifier proposes a reference level (its own field
 * group); a column chosen for one role leaves the covariates. The model and the measure
 * never change each other or with the outcome type: what no longer fits is flagged by
 * validation and disabled in the choices, with the reason.
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
    const allowed = outcomeColumnTypes(next.outcome.type);
    const column = byName.get(next.outcome.column);
    if (!column || !allowed.includes(column.type)) next.outcome.column = '';
    next.outcome.event = '';
    if (next.outcome.type !== 'count') next.outcome.personTime = '';
  }
  if (change.outcome?.column !== undefined && change.outcome.column !== draft.outcome.column && change.outcome.event === undefined) {
    next.outcome.event = '';
  }
  // A new kind of intervention clears a column of the other kind.
  if (next.exposure.type !== draft.exposure.type) {
    const column = byName.get(next.exposure.column);
    const fits = column !== undefined && (next.exposure.type === 'continuous' ? column.type === 'continuous' || column.type === 'count' : column.type === 'binary' || column.type === 'categorical');
    if (!fits) next.exposure.column = '';
    if (next.exposure.type === 'continuous') next.exposure.reference = '';
  }
  // A new column keeps the reference given with it only when that is one of its levels.
  if (next.exposure.column !== draft.exposure.column && next.exposure.type === 'binary') {
    const levels = byName.get(next.exposure.column)?.levels ?? null;
    if (!levels?.includes(next.exposure.reference)) next.exposure.reference = defaultReference(levels);
  }
  if (next.modifier.column !== draft.modifier.column) {
    const column = byName.get(next.modifier.column);
    const categorical = column !== undefined && entryKind(column.type) === 'categorical';
    if (!categorical) next.modifier.reference = '';
    else if (!column.levels?.includes(next.modifier.reference)) next.modifier.reference = defaultReference(column.levels);
  }
  const roles = new Set([next.outcome.column, next.exposure.column, next.modifier.column, next.outcome.personTime ?? '', next.weights]);
  next.covariates = next.covariates.filter((name) => !roles.has(name) && byName.has(name));
  for (const name of next.covariates) {
    const column = byName.get(name);
    if (column && entryKind(column.type) === 'categorical' && !next.covariateReferences[name]) {
      next.covariateReferences[name] = defaultReference(column.levels);
    }
  }
  return next;
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
    outcome: { type: spec.outcome.type, column: spec.outcome.column, event: spec.outcome.event ?? '', personTime: spec.outcome.personTime ?? '' },
    exposure: { column: spec.exposure.column, reference: spec.exposure.reference ?? '', type: spec.exposure.type ?? 'binary' },
    modifier: {
      column: spec.modifier.column,
      reference: spec.modifier.reference ?? '',
      centre: typeof centre === 'number' ? 'value' : centre,
      centreValue: typeof centre === 'number' ? String(centre) : '',
      slopes: slopes.kind,
      slopeList:
        slopes.kind === 'percentiles'
          ? slopes.percentiles.join(', ')
          : slopes.kind === 'values'
            ? slopes.values.map((value, index) => (slopes.names?.[index] ? `${value} = ${slopes.names[index]}` : String(value))).join(', ')
            : '',
      trend: spec.modifier.type === 'categorical' ? spec.modifier.ordered !== undefined || !byName.get(spec.modifier.column)?.ordered : true,
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
    standardize: spec.standardize ?? false,
    cluster: spec.cluster?.column ?? '',
    weights: spec.weights?.column ?? '',
    robust: spec.standardErrors === 'robust',
  };
}

/** The column types an outcome of each kind may have. */
export function outcomeColumnTypes(type: OutcomeType): ColumnKind[] {
  return type === 'binary' ? ['binary'] : type === 'count' ? ['count'] : ['continuous', 'count'];
}
