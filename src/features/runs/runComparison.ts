/**
 * Up to four runs side by side: what differs in their specifications (field by field, in
 * the form's words), warnings when they use different references, and every figure the
 * runs estimated (within-stratum effects matched by level name, simple slopes, RERI, AP,
 * S, the multiplicative interaction, the omnibus p-value) with each run's change from the
 * first run, computed from the results whenever both runs have the figure.
 */
import type { Result, Spec } from '@/engine/boundary/schemas';
import { CI_METHOD_LABEL, MEASURE_LABEL, MODEL_LABEL, MULTIPLICITY_LABEL } from '../analyses/specRules';
import { formatInterval, formatP, measureInfo, type NumberKind } from './resultFormat';

/** The most runs one comparison shows. */
export const MAX_COMPARED_RUNS = 4;

/** "Run A", "Run B", … */
export const runLetter = (index: number): string => String.fromCharCode(65 + index);

export interface ComparedRun {
  id: string;
  spec: Spec;
  result: Result | null;
}

/** Human names of specification fields (the analysis form's labels). */
export const SPEC_FIELD_LABEL: Record<string, string> = {
  'outcome.column': 'Outcome',
  'outcome.type': 'Outcome type',
  'outcome.event': 'Event level of the outcome',
  'exposure.column': 'Intervention',
  'exposure.reference': 'Reference level of the intervention',
  'modifier.column': 'Modifier',
  'modifier.type': 'Modifier enters as',
  'modifier.reference': 'Reference level of the modifier',
  'modifier.centre': 'Centre of the modifier',
  'modifier.slopesAt': 'Effect marked at',
  covariates: 'Adjusted for',
  model: 'Model',
  effectMeasure: 'Effect measure',
  'ci.level': 'Interval level',
  'ci.method': 'Interval method',
  'ci.replicates': 'Bootstrap replicates',
  'ci.seed': 'Random seed',
  alpha: 'Level of tests (α)',
  multiplicity: 'Adjustment across strata',
  preventive: 'Preventive recoding',
  standardErrors: 'Standard errors',
  'outcome.personTime': 'Person-time',
  'cluster.column': 'Cluster column',
  'weights.column': 'Frequency weights',
  'planning.interaction': 'Planning: interaction size',
  'planning.power': 'Planning: target power',
};

/** Each specification field in words, by the path SPEC_FIELD_LABEL names. */
function specFields(spec: Spec): Map<string, string> {
  const slopes = spec.modifier.slopesAt;
  const entries: [string, string | undefined][] = [
    ['outcome.column', spec.outcome.column],
    ['outcome.type', spec.outcome.type],
    ['outcome.event', spec.outcome.event],
    ['exposure.column', spec.exposure.column],
    ['exposure.reference', spec.exposure.reference],
    ['modifier.column', spec.modifier.column],
    ['modifier.type', spec.modifier.type],
    ['modifier.reference', spec.modifier.reference],
    ['modifier.centre', spec.modifier.centre === undefined ? undefined : String(spec.modifier.centre)],
    ['modifier.slopesAt', !slopes ? undefined : slopes.kind === 'sd' ? 'mean and ± 1 SD' : slopes.kind === 'percentiles' ? `percentiles ${slopes.percentiles.join(', ')}` : `values ${slopes.values.map((value, index) => (slopes.names?.[index] ? `${value} (${slopes.names[index]})` : String(value))).join(', ')}`],
    ['covariates', spec.covariates.length === 0 ? 'nothing' : spec.covariates.map((c) => (c.type === 'categorical' ? `${c.column} (reference ${c.reference ?? 'first level'})` : c.column)).join(', ')],
    ['model', MODEL_LABEL[spec.model]],
    ['effectMeasure', spec.effectMeasure && MEASURE_LABEL[spec.effectMeasure]],
    ['ci.level', `${Number((spec.ci.level * 100).toPrecision(12))} %`],
    ['ci.method', CI_METHOD_LABEL[spec.ci.method]],
    ['ci.replicates', spec.ci.replicates === undefined ? undefined : String(spec.ci.replicates)],
    ['ci.seed', spec.ci.seed === undefined ? undefined : String(spec.ci.seed)],
    ['alpha', spec.alpha === undefined ? undefined : String(spec.alpha)],
    ['multiplicity', spec.multiplicity && MULTIPLICITY_LABEL[spec.multiplicity]],
    ['preventive', spec.preventive === undefined ? undefined : spec.preventive ? 'yes' : 'no'],
    ['standardErrors', spec.standardErrors],
    ['outcome.personTime', spec.outcome.personTime],
    ['cluster.column', spec.cluster?.column],
    ['weights.column', spec.weights?.column],
    ['planning.interaction', spec.planning?.interaction === undefined ? undefined : String(spec.planning.interaction)],
    ['planning.power', spec.planning?.power === undefined ? undefined : String(spec.planning.power)],
  ];
  return new Map(entries.filter((entry): entry is [string, string] => entry[1] !== undefined));
}

export interface SpecDifference {
  path: string;
  /** The field's human name. */
  label: string;
  /** One value per run ("(default)" where a run leaves the field out). */
  values: string[];
}

/** The specification fields whose values differ among the runs. */
export function specDifferences(specs: readonly Spec[]): SpecDifference[] {
  const fields = specs.map(specFields);
  return Object.keys(SPEC_FIELD_LABEL)
    .map((path) => ({ path, label: SPEC_FIELD_LABEL[path], values: fields.map((f) => f.get(path) ?? '(default)') }))
    .filter((row) => new Set(row.values).size > 1);
}

/**
 * Warnings when runs compare against different references: another intervention or
 * modifier reference level (from the results where they exist, else the specifications),
 * or another modifier or intervention column. Each names the runs.
 */
export function referenceWarnings(runs: readonly ComparedRun[]): string[] {
  const warnings: string[] = [];
  const first = runs[0];
  if (!first) return warnings;
  const exposureReference = (run: ComparedRun) => run.result?.exposure.reference ?? run.spec.exposure.reference;
  const modifierReference = (run: ComparedRun) => run.result?.modifier.reference ?? run.spec.modifier.reference ?? null;
  runs.slice(1).forEach((run, offset) => {
    const these = `run ${runLetter(0)} and run ${runLetter(offset + 1)}`;
    if (run.spec.exposure.column !== first.spec.exposure.column) {
      warnings.push(`${capital(these)} study different interventions (${first.spec.exposure.column}, ${run.spec.exposure.column}).`);
    } else if (exposureReference(run) !== exposureReference(first)) {
      warnings.push(`${capital(these)} use different reference levels of the intervention ${run.spec.exposure.column} (${exposureReference(first)}, ${exposureReference(run)}): their effects point in different directions.`);
    }
    if (run.spec.modifier.column !== first.spec.modifier.column) {
      warnings.push(`${capital(these)} use different modifiers (${first.spec.modifier.column}, ${run.spec.modifier.column}): strata are matched by level name only.`);
    } else {
      const a = modifierReference(first);
      const b = modifierReference(run);
      if (a !== null && b !== null && a !== b) {
        warnings.push(`${capital(these)} use different reference levels of the modifier ${run.spec.modifier.column} (${a}, ${b}): RERI, AP, S and the interaction ratios are against different strata.`);
      }
    }
  });
  return warnings;
}

function capital(text: string): string {
  return text.charAt(0).toUpperCase() + text.slice(1);
}

interface Figure {
  key: string;
  label: string;
  estimate: number | null;
  text: string;
  /** The effect measure the figure is on, when it is one (effects, multiplicative interaction). */
  measure: Result['effectMeasure'] | null;
}

function figures(result: Result): Figure[] {
  const measure = measureInfo(result);
  const kind: NumberKind = measure.kind;
  const column = result.modifier.column;
  const rows: Figure[] = [];
  const add = (key: string, label: string, value: { estimate: number | null; lower: number | null; upper: number | null } | null, k: NumberKind, on: Result['effectMeasure'] | null) => {
    if (value) rows.push({ key, label, estimate: value.estimate, text: `${on ? `${on} ` : ''}${formatInterval(value.estimate, value.lower, value.upper, k)}`, measure: on });
  };
  for (const stratum of result.strata) add(`effect:${stratum.level}`, `Effect in ${column} = ${stratum.level}`, stratum.effect, kind, measure.code);
  for (const slope of result.slopes ?? []) add(`slope:${slope.label}`, `Effect at ${slope.label} of ${column}`, slope, kind, measure.code);
  for (const entry of result.interaction.additive) {
    add(`reri:${entry.level}`, `RERI, ${entry.level}`, entry.reri, 'difference', null);
    add(`ap:${entry.level}`, `AP, ${entry.level}`, entry.ap, 'difference', null);
    add(`s:${entry.level}`, `S, ${entry.level}`, entry.s, 'ratio', null);
    add(`did:${entry.level}`, `Difference in differences, ${entry.level}`, entry.differenceInDifferences, kind, measure.code);
  }
  for (const entry of result.interaction.multiplicative) add(`product:${entry.level}`, `Interaction on the ${measure.ratio ? 'ratio' : 'difference'} scale, ${entry.level}`, entry, measure.ratio ? 'ratio' : kind, measure.code);
  const p = result.interaction.omnibus.p;
  rows.push({ key: 'omnibus-p', label: 'Omnibus test of effect modification, p', estimate: p, text: formatP(p), measure: null });
  return rows;
}

export interface FigureRow {
  key: string;
  label: string;
  /** One text per run ("not estimated" where a run lacks the figure). */
  values: string[];
  /** Per run: its point estimate minus the first run's; null for the first run and where either lacks the figure. */
  changes: (number | null)[];
  /** Per run: why its change needs care (another effect measure), or null. */
  notes: (string | null)[];
}

/**
 * Every figure any of the runs estimated, matched by what it is (stratum level names,
 * slope labels, interaction levels), in the order first seen; runs without a result
 * show "no result".
 */
export function figureRows(runs: readonly ComparedRun[]): FigureRow[] {
  const perRun = runs.map((run) => (run.result ? figures(run.result) : null));
  const order: { key: string; label: string }[] = [];
  for (const list of perRun) for (const figure of list ?? []) if (!order.some((o) => o.key === figure.key)) order.push(figure);
  return order.map(({ key, label }) => {
    const found = perRun.map((list) => list?.find((figure) => figure.key === key) ?? null);
    const base = found[0];
    return {
      key,
      label,
      values: found.map((figure, i) => (perRun[i] === null ? 'no result' : (figure?.text ?? 'not estimated'))),
      changes: found.map((figure, i) => (i === 0 || base?.estimate == null || figure?.estimate == null ? null : figure.estimate - base.estimate)),
      notes: found.map((figure, i) =>
        i > 0 && base?.measure && figure?.measure && base.measure !== figure.measure ? `${base.measure} → ${figure.measure}: different measures` : null,
      ),
    };
  });
}

/** The whole comparison of up to four runs, as the page and the API show it. */
export function compareRuns(runs: readonly ComparedRun[]) {
  return {
    runs: runs.map((run, i) => ({ id: run.id, letter: runLetter(i) })),
    specDifferences: specDifferences(runs.map((run) => run.spec)),
    referenceWarnings: referenceWarnings(runs),
    figures: figureRows(runs),
  };
}
