/**
 * The results of a run as tables, built only from the engine's result (ResultSchema) and
 * the specification it ran. The layout follows Knol and VanderWeele, "Recommendations for
 * presenting analyses of effect modification and interaction", Int J Epidemiol
 * 2012;41:514-520: every intervention × modifier cell against one reference with its
 * counts, the intervention's effect within each modifier level, the interaction on the
 * additive (RERI, AP, S) and multiplicative scales, and the confounders adjusted for.
 * Number formats are in resultFormat.ts, the sentences in resultWords.ts and the CSV in
 * resultCsv.ts.
 */
import type { Result, Spec } from '@/engine/boundary/schemas';
import { MODEL_LABEL } from '../analyses/specRules';
import { percentText, specInWords } from '../analyses/specWords';
import {
  displayLevels, fixed, formatCount, formatNumber, intervalCell, measureInfo, modifierDecimals, numberCell, pCell,
  type IntervalCell, type MeasureInfo, type NumberCell,
} from './resultFormat';
import { absoluteEffectsView, eValuesView, type AbsoluteEffectsView, type EValuesView } from './absoluteEffectsView';
import { clusterRateWeightView, varianceName, type ClusterRateWeightView } from './clusterRateWeightView';
import { perResult } from './finishedResults';
import { effectRangeInWords, isThin } from './continuousWords';
import { crudeCrossCheck, type CrudeCrossCheckView } from './crudeCrossCheck';
import {
  missingInWords, multiplicityNote, OMNIBUS_LABEL, planningInWords, referenceText, warningsInWords,
  type WarningView,
} from './resultWords';

export interface JointCellView {
  exposure: string;
  n: NumberCell;
  /** Binary outcomes: events; continuous: null. */
  events: NumberCell | null;
  /** Binary: proportion with the event; continuous: mean outcome. */
  outcome: NumberCell;
  /** Against the common reference cell; null for the reference cell itself. */
  effect: IntervalCell | null;
}

export interface JointRowView {
  level: string;
  isReference: boolean;
  cells: JointCellView[];
  /** The intervention's effect within this level. */
  within: { effect: IntervalCell; p: NumberCell; pHolm: NumberCell; pBh: NumberCell; n: NumberCell; events: NumberCell | null };
}

export interface InteractionRowView {
  level: string;
  /** The joint cell the additive measures use, when preventive recoding moved it away from the common reference. */
  recodedReference: string | null;
  reri: IntervalCell | null;
  ap: IntervalCell | null;
  apStar: IntervalCell | null;
  s: IntervalCell | null;
  multiplicative: (IntervalCell & { p: NumberCell }) | null;
  differenceInDifferences: (IntervalCell & { p: NumberCell }) | null;
  additiveMethod: string | null;
}

export interface SlopeRowView {
  label: string;
  at: NumberCell;
  effect: IntervalCell;
  p: NumberCell;
  /** The interval leaves out no effect. */
  clear: boolean;
  /** The point lies where the data are thin. */
  thin: boolean;
}

export interface ResultTables {
  measure: MeasureInfo;
  /** "95 % CI" */
  ciLabel: string;
  exposure: { column: string; reference: string; level: string };
  modifier: { column: string; type: 'categorical' | 'continuous'; reference: string | null; levels: string[] };
  /** Model and sample in one line. */
  modelLine: string;
  specInWords: string;
  /** Categorical modifiers: the Knol-VanderWeele table, reference level first. */
  joint: { referenceLabel: string; exposureLevels: [string, string]; rows: JointRowView[] } | null;
  /** Categorical modifiers: the modifier's effect within each arm (non-reference levels). */
  modifierWithinArms: { level: string; cells: { exposure: string; effect: IntervalCell }[] }[];
  interaction: InteractionRowView[];
  omnibus: { label: string; statistic: NumberCell; df: string; p: NumberCell };
  /** The crude cross-check of the adjusted model (crudeCrossCheck.ts); for RD the pooled limits use Sato's variance, `alternative` Greenland-Robins'. */
  crudeCheck: CrudeCrossCheckView | null;
  continuous: {
    slopes: SlopeRowView[];
    /** Where the effect is distinguishable from none, and where the data are thin, in one sentence. */
    johnsonNeyman: string | null;
    /** A few words about each Johnson-Neyman boundary. */
    boundaries: string[];
    /** The middle 90 % of the modifier's values (5th to 95th percentile), when the result records it. */
    middle: [NumberCell, NumberCell] | null;
    observed: [number, number] | null;
    /** "1.0 to 9.0" */
    observedText: string | null;
    mean: NumberCell;
    sd: NumberCell;
  } | null;
  covariates: { column: string; text: string }[];
  multiplicityNote: string;
  warnings: WarningView[];
  /** The minimum detectable interaction in words. */
  powerNote: string | null;
  /** Standardized risks, RD, NNT and interaction contrasts (binary outcomes, when asked for). */
  absolute: AbsoluteEffectsView | null;
  /** E-values of the stratum ratios, by level. */
  eValues: EValuesView | null;
  /** Variance in use, clusters, person-time rates, overdispersion and frequency weights. */
  extras: ClusterRateWeightView;
}

/** What every table builder reads: the result, how its measure is shown, and its display levels. */
interface TableContext {
  result: Result;
  measure: MeasureInfo;
  /** Modifier levels, reference first. */
  levels: string[];
  exposureColumn: string;
  modifierColumn: string;
}

function additiveMethod(method: string | undefined): string | null {
  return method === 'bootstrap' ? 'percentile bootstrap' : method === 'mover' ? 'MOVER' : method === 'delta' ? 'delta method' : null;
}

/** One row of the Knol-VanderWeele table: both arms at a modifier level, and the effect within it. */
function jointRow({ result, measure }: TableContext, exposureLevels: [string, string], level: string): JointRowView {
  const binary = result.outcome.type === 'binary';
  const stratum = result.strata.find((entry) => entry.level === level);
  const cells = exposureLevels.map((exposure) => {
    const cell = result.joint?.cells.find((entry) => entry.modifier === level && entry.exposure === exposure);
    const idPart = `${exposure}-${level}`;
    return {
      exposure,
      n: numberCell(cell?.n, 'count', `joint-n-${idPart}`),
      events: binary ? numberCell(cell?.events, 'count', `joint-events-${idPart}`) : null,
      outcome: binary ? numberCell(cell?.risk, 'percent', `joint-risk-${idPart}`) : numberCell(cell?.mean, 'mean', `joint-mean-${idPart}`),
      effect: cell?.effect ? intervalCell(cell.effect, measure.kind, `joint-effect-${idPart}`) : null,
    };
  });
  return {
    level,
    isReference: level === result.modifier.reference,
    cells,
    within: {
      effect: intervalCell(stratum?.effect, measure.kind, `stratum-effect-${level}`),
      p: pCell(stratum?.effect.p, `stratum-p-${level}`),
      pHolm: pCell(stratum?.pAdjusted.holm, `stratum-p-holm-${level}`),
      pBh: pCell(stratum?.pAdjusted.bh, `stratum-p-bh-${level}`),
      n: numberCell(stratum?.n, 'count'),
      events: binary ? numberCell(stratum?.events, 'count') : null,
    },
  };
}

/** Categorical modifiers: the Knol-VanderWeele table and the modifier's effect within each arm. */
function jointTables(context: TableContext): Pick<ResultTables, 'joint' | 'modifierWithinArms'> {
  const { result, measure, levels, exposureColumn, modifierColumn } = context;
  if (result.modifier.type !== 'categorical' || !result.joint) return { joint: null, modifierWithinArms: [] };
  const exposureLevels: [string, string] = [result.exposure.reference, result.exposure.level];
  const rows = levels.map((level) => jointRow(context, exposureLevels, level));
  const modifierWithinArms = levels.slice(1).map((level) => ({
    level,
    cells: exposureLevels.map((exposure) => ({
      exposure,
      effect: intervalCell(result.modifierEffects.find((entry) => entry.level === level && entry.exposure === exposure)?.effect, measure.kind, `modifier-effect-${exposure}-${level}`),
    })),
  }));
  return { joint: { referenceLabel: referenceText(result.joint.reference, exposureColumn, modifierColumn), exposureLevels, rows }, modifierWithinArms };
}

/** The interaction on both scales, one row per non-reference level (or per continuous contrast). */
function interactionRows({ result, measure, levels, exposureColumn, modifierColumn }: TableContext): InteractionRowView[] {
  // Additive and multiplicative entries are keyed by level name; for a continuous
  // modifier they are "+1 SD of x" (additive) and "per 1 unit of x" (multiplicative).
  const interactionLevels =
    result.modifier.type === 'categorical'
      ? levels.slice(1)
      : [...new Set([...result.interaction.multiplicative.map((entry) => entry.level), ...result.interaction.additive.map((entry) => entry.level)])];
  return interactionLevels.map((level) => {
    const additive = result.interaction.additive.find((entry) => entry.level === level);
    const multiplicative = result.interaction.multiplicative.find((entry) => entry.level === level);
    const reference = additive?.reference;
    const common = result.joint?.reference;
    const recoded =
      reference && common && (reference.exposure !== common.exposure || reference.modifier !== common.modifier)
        ? referenceText(reference, exposureColumn, modifierColumn)
        : null;
    const did = additive?.differenceInDifferences;
    return {
      level,
      recodedReference: recoded,
      reri: additive?.reri ? intervalCell(additive.reri, 'difference', `reri-${level}`) : null,
      ap: additive?.ap ? intervalCell(additive.ap, 'difference', `ap-${level}`) : null,
      apStar: additive?.apStar ? intervalCell(additive.apStar, 'difference', `apstar-${level}`) : null,
      s: additive?.s ? intervalCell(additive.s, 'ratio', `s-${level}`) : null,
      multiplicative: multiplicative
        ? { ...intervalCell(multiplicative, 'ratio', `ratio-of-ratios-${level}`), p: pCell(multiplicative.p, `ratio-of-ratios-p-${level}`) }
        : null,
      differenceInDifferences: did ? { ...intervalCell(did, measure.kind, `did-${level}`), p: pCell(did.p, `did-p-${level}`) } : null,
      additiveMethod: additiveMethod(additive?.reri?.method),
    };
  });
}

/** The omnibus test of all product terms. */
function omnibusView(result: Result): ResultTables['omnibus'] {
  const omnibus = result.interaction.omnibus;
  const statisticName = omnibus.test === 'F' ? 'F' : 'χ²';
  return {
    label: OMNIBUS_LABEL[omnibus.test],
    statistic: { ...numberCell(omnibus.statistic, 'statistic', 'omnibus-statistic'), text: `${statisticName} = ${formatNumber(omnibus.statistic, 'statistic')}` },
    df: omnibus.df2 !== null ? `${omnibus.df} and ${formatCount(omnibus.df2)} df` : `${omnibus.df} df`,
    p: pCell(omnibus.p, 'omnibus-p'),
  };
}

/** Continuous modifiers: the effect at the marked points, where it is distinguishable from none, and where the modifier's values lie. */
function continuousView({ result, measure, modifierColumn }: TableContext): ResultTables['continuous'] {
  if (result.modifier.type !== 'continuous') return null;
  const decimals = modifierDecimals(result.modifier.observed);
  const words = result.johnsonNeyman ? effectRangeInWords(result.johnsonNeyman, { modifier: modifierColumn, alpha: result.alpha, spread: result.spread }) : null;
  const observed = result.modifier.observed;
  return {
    slopes: (result.slopes ?? []).map((slope, index) => ({
      label: slope.label,
      at: { text: fixed(slope.at, decimals), value: slope.at, testId: `slope-at-${index}` },
      effect: intervalCell(slope, measure.kind, `slope-effect-${index}`),
      p: pCell(slope.p, `slope-p-${index}`),
      clear: slope.lower !== null && slope.upper !== null && (slope.lower > measure.nullValue || slope.upper < measure.nullValue),
      thin: words !== null && observed !== null && isThin(slope.at, words.thin, observed),
    })),
    johnsonNeyman: words?.sentence ?? null,
    boundaries: words?.boundaries.map((boundary) => boundary.text) ?? [],
    middle: result.spread
      ? [{ text: fixed(result.spread.p5, decimals), value: result.spread.p5, testId: 'modifier-p5' }, { text: fixed(result.spread.p95, decimals), value: result.spread.p95, testId: 'modifier-p95' }]
      : null,
    observed,
    observedText: observed ? `${fixed(observed[0], decimals)} to ${fixed(observed[1], decimals)}` : null,
    mean: { text: fixed(result.modifier.mean, decimals + 1), value: result.modifier.mean },
    sd: { text: fixed(result.modifier.sd, decimals + 1), value: result.modifier.sd },
  };
}

/** The covariates adjusted for, with the reference level of each categorical one. */
function covariatesView(result: Result): ResultTables['covariates'] {
  return result.covariates.map((covariate) => ({
    column: covariate.column,
    text: covariate.type === 'categorical' ? `${covariate.column} (reference ${covariate.reference ?? 'first level'})` : covariate.column,
  }));
}

/** The model and the sample in one line. */
function modelLine(result: Result): string {
  const model = result.model;
  const fallback = model.family !== model.requestedFamily ? ` (${MODEL_LABEL[model.requestedFamily].toLowerCase()} was asked for; see the warnings)` : '';
  const missing = missingInWords(result);
  return (
    `${MODEL_LABEL[model.family]}${fallback}; ${formatCount(result.n)} rows analysed` +
    `${result.dropped > 0 ? `, ${formatCount(result.dropped)} left out for missing values${missing ? ` (missing in ${missing})` : ''}` : ''}; ` +
    `${model.converged ? (model.iterations > 0 ? `converged in ${model.iterations} iterations` : 'fitted directly') : 'did not converge'}; ` +
    `${varianceName(result)} standard errors${result.clustering ? ` (${formatCount(result.clustering.clusters)} clusters)` : ''}.`
  );
}

/** Builds every table of the results page from the result and its specification. */
/** buildResultTables, computed once per finished result and specification (finishedResults.ts). */
export const resultTablesOf = perResult(buildResultTables, (spec: Spec) => JSON.stringify(spec));

export function buildResultTables(result: Result, spec: Spec): ResultTables {
  const measure = measureInfo(result);
  const levels = displayLevels(result);
  const context: TableContext = { result, measure, levels, exposureColumn: result.exposure.column, modifierColumn: result.modifier.column };
  return {
    measure,
    ciLabel: `${percentText(result.ciLevel)} % CI`,
    exposure: result.exposure,
    modifier: { column: context.modifierColumn, type: result.modifier.type, reference: result.modifier.reference, levels },
    modelLine: modelLine(result),
    specInWords: specInWords(spec, { modifierLevels: result.modifier.levels }),
    ...jointTables(context),
    interaction: interactionRows(context),
    omnibus: omnibusView(result),
    crudeCheck: crudeCrossCheck(result, measure, levels),
    continuous: continuousView(context),
    covariates: covariatesView(result),
    multiplicityNote: multiplicityNote(result),
    warnings: warningsInWords(result),
    powerNote: planningInWords(result, measure),
    absolute: absoluteEffectsView(result),
    eValues: eValuesView(result),
    extras: clusterRateWeightView(result),
  };
}
