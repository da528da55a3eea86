/**
 * Validation of the analysis form and conversion of its draft to the engine's
 * specification (SpecSchema), with each message under the field it concerns, and the
 * form field a server validation path belongs to.
 */
import { SpecSchema, type Spec } from '@/engine/boundary/schemas';
import { entryKind, needsEventLevel, type FormColumn } from './formColumns';
import type { AnalysisDraft, SpecDraft } from './specForm';
import { clusterColumnRefusal, personTimeColumnRefusal, weightsColumnRefusal } from './extrasRules';
import { specRuleProblems } from './specRules';
import { doseRefusal } from './doseRules';

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

/**
 * Named values: "3 = mild, 5 = moderate, 7" → values [3, 5, 7] and names ["mild", "moderate", ""].
 * A value without a number is null. Items are separated by commas or semicolons.
 */
export function parseNamedValues(text: string): { value: number | null; name: string }[] {
  return text
    .split(/[,;]/)
    .map((part) => part.trim())
    .filter((part) => part !== '')
    .map((part) => {
      const [number, ...rest] = part.split(/[=:]/);
      return { value: parseNumber(number), name: rest.join(' ').trim() };
    });
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
  } else if (draft.outcome.type === 'count' && outcome.type !== 'count') errors['outcome.column'] = `${outcome.name} is not a count column.`;
  const personTime = draft.outcome.type === 'count' && draft.outcome.personTime ? draft.outcome.personTime : undefined;
  const personTimeRefusal = personTime === undefined ? null : personTimeColumnRefusal(byName.get(personTime));
  if (personTimeRefusal) errors['outcome.personTime'] = personTimeRefusal;
  const clusterRefusal = draft.cluster === '' ? null : clusterColumnRefusal(byName.get(draft.cluster));
  if (clusterRefusal) errors.cluster = clusterRefusal;
  const weightsRefusal = draft.weights === '' ? null : weightsColumnRefusal(byName.get(draft.weights));
  if (weightsRefusal) errors.weights = weightsRefusal;
  const standardErrors = draft.robust && draft.model === 'poisson' ? ('robust' as const) : undefined;
  const eventNeeded = outcome !== undefined && draft.outcome.type === 'binary' && needsEventLevel(outcome);
  if (eventNeeded && !outcome.levels?.includes(draft.outcome.event)) errors['outcome.event'] = 'Choose the level that counts as the event.';

  const dose = draft.exposure.type === 'continuous';
  if (!exposure) errors['exposure.column'] = 'Choose the intervention.';
  else if (exposure.name === outcome?.name) errors['exposure.column'] = 'The intervention cannot also be the outcome.';
  else if (dose) {
    if (exposure.type !== 'continuous' && exposure.type !== 'count') errors['exposure.column'] = `${exposure.name} is not a continuous or count column; a dose needs numbers.`;
    if (draft.ciMethod === 'bootstrap' || draft.ciMethod === 'mover') errors['ci.method'] = doseRefusal(draft.ciMethod);
    if (draft.preventive) errors.preventive = doseRefusal('preventive');
  } else if (exposure.type !== 'binary' && exposure.type !== 'categorical') errors['exposure.column'] = `${exposure.name} is not binary or categorical.`;
  else if ((exposure.levels?.length ?? 0) !== 2 || exposure.levelsTruncated) {
    errors['exposure.column'] = `The intervention needs exactly two levels; ${exposure.name} has ${exposure.levelsTruncated ? 'many' : (exposure.levels?.length ?? 0)}.`;
  }
  if (!dose && exposure && !errors['exposure.column'] && !exposure.levels?.includes(draft.exposure.reference)) {
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
    if (draft.modifier.slopes === 'values') {
      const items = parseNamedValues(draft.modifier.slopeList);
      const numbers = items.flatMap((item) => (item.value === null ? [] : [item.value]));
      const range = modifier.numeric;
      const outside = range ? numbers.filter((value) => value < range.min || value > range.max) : [];
      if (items.length === 0) errors['modifier.slopesAt'] = 'List the values, separated by commas, each with an optional name: 3 = mild.';
      else if (numbers.length !== items.length) errors['modifier.slopesAt'] = 'Start each item with a number, e.g. 3 = mild, 5 = moderate.';
      else if (items.length > 20) errors['modifier.slopesAt'] = 'List at most 20.';
      else if (items.some((item) => item.name.length > 40)) errors['modifier.slopesAt'] = 'Keep each name to 40 characters.';
      else if (outside.length > 0 && range) errors['modifier.slopesAt'] = `${outside.join(', ')} lies outside the observed range (${range.min} to ${range.max}).`;
      else slopesAt = items.some((item) => item.name !== '') ? { kind: 'values', values: numbers, names: items.map((item) => item.name) } : { kind: 'values', values: numbers };
    } else if (draft.modifier.slopes !== 'sd') {
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

  // The same rule check the server applies when saving (specRules.ts).
  const ruleSpec = {
    outcome: { column: draft.outcome.column, type: draft.outcome.type, ...(personTime !== undefined ? { personTime } : {}) },
    model: draft.model,
    effectMeasure: draft.effectMeasure,
    exposure: { column: draft.exposure.column, reference: draft.exposure.reference },
    modifier: { column: draft.modifier.column, type: modifierType },
    covariates,
    ci: { level: 0.95, method: draft.ciMethod },
    ...(draft.cluster !== '' ? { cluster: { column: draft.cluster } } : {}),
    ...(draft.weights !== '' ? { weights: { column: draft.weights } } : {}),
    ...(standardErrors !== undefined ? { standardErrors } : {}),
    ...(draft.standardize ? { standardize: true } : {}),
  };
  for (const problem of specRuleProblems(ruleSpec)) {
    errors[fieldForServerPath(problem.path)] ??= problem.message;
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
      ...(personTime !== undefined ? { personTime } : {}),
    },
    exposure: dose ? { column: draft.exposure.column, type: 'continuous' } : { column: draft.exposure.column, reference: draft.exposure.reference },
    modifier:
      modifierType === 'categorical'
        ? { column: draft.modifier.column, type: 'categorical', reference: draft.modifier.reference, ...orderedScores(modifier, draft) }
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
    ...(draft.standardize ? { standardize: true } : {}),
    ...(standardErrors !== undefined ? { standardErrors } : {}),
    ...(draft.cluster !== '' ? { cluster: { column: draft.cluster } } : {}),
    ...(draft.weights !== '' ? { weights: { column: draft.weights } } : {}),
  };
  const parsed = SpecSchema.safeParse(spec);
  if (!parsed.success) {
    const schemaErrors: FieldErrors = {};
    for (const issue of parsed.error.issues) schemaErrors[issue.path.join('.') || 'spec'] = issue.message;
    return { ok: false, errors: schemaErrors };
  }
  const parsedModifier = parsed.data.modifier;
  if (parsedModifier === undefined) return { ok: false, errors: { 'modifier.column': 'Choose a modifier.' } };
  return { ok: true, spec: { ...parsed.data, modifier: parsedModifier } };
}

/** An ordered modifier's dictionary scores for the levels it has, when the test for trend is asked for. */
function orderedScores(modifier: FormColumn | undefined, draft: SpecDraft): { ordered?: { scores: Record<string, number> } } {
  const scores = modifier?.ordered;
  if (!scores || !draft.modifier.trend || !modifier.levels) return {};
  return { ordered: { scores: Object.fromEntries(modifier.levels.filter((level) => level in scores).map((level) => [level, scores[level]])) } };
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
  if (local === 'cluster.column' || local === 'cluster') return 'cluster';
  if (local === 'weights.column' || local === 'weights') return 'weights';
  return local;
}
