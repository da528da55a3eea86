/**
 * The results of a run as CSV: the caution first (one record per sentence, padded to the
 * full width so every record has the same number of fields), then a header and one record
 * per estimate, with unrounded numbers. Fields go through src/lib/csv.ts (RFC 4180,
 * formula-injection safe), which the audit export uses too.
 */
import type { Result, Spec } from '@/engine/boundary/schemas';
import { CAUTION_VERSION, RESULT_CAUTIONS } from '@/lib/cautions';
import { csvRecord } from '@/lib/csv';
import { specInWords } from '../analyses/specWords';
import { absoluteRows, eValueRows } from './absoluteCsv';
import { personTimeUnit, varianceName } from './clusterRateWeightView';
import { displayLevels, measureInfo, type MeasureInfo } from './resultFormat';
import { doseTrendCsvRows } from './doseTrendCsv';
import { multiplicityNote, OMNIBUS_LABEL } from './resultWords';
import { effectRangeInWords } from './continuousWords';
import { screenRows } from './screenCsv';

export const CSV_COLUMNS = [
  'section',
  'level',
  'arm',
  'measure',
  'estimate',
  'lower',
  'upper',
  'p',
  'p_holm',
  'p_bh',
  'n',
  'events',
  'statistic',
  'df',
  'note',
] as const;

type CsvRow = Partial<Record<(typeof CSV_COLUMNS)[number], string | number | null>>;

/** What every section's rows read: the result, its measure, and its modifier levels in display order. */
interface CsvContext {
  result: Result;
  measure: MeasureInfo;
  levels: string[];
  exposure: string;
  modifier: string;
}

/** Entries in display order (reference first, then natural order), whatever order the engine used. */
function inDisplayOrder<T extends { level: string }>(levels: readonly string[], entries: readonly T[]): T[] {
  const rank = (level: string) => {
    const index = levels.indexOf(level);
    return index === -1 ? levels.length : index;
  };
  return [...entries].sort((a, b) => rank(a.level) - rank(b.level));
}

function jointRows({ result, measure, levels, exposure, modifier }: CsvContext): CsvRow[] {
  const rows: CsvRow[] = [];
  for (const level of levels) {
    for (const arm of [result.exposure.reference, result.exposure.level]) {
      const cell = result.joint?.cells.find((entry) => entry.modifier === level && entry.exposure === arm);
      if (!cell) continue;
      rows.push({
        section: 'joint',
        level,
        arm,
        measure: `${measure.code} against ${exposure} = ${result.joint?.reference.exposure}, ${modifier} = ${result.joint?.reference.modifier}`,
        estimate: cell.effect ? cell.effect.estimate : measure.nullValue,
        lower: cell.effect?.lower ?? null,
        upper: cell.effect?.upper ?? null,
        p: cell.effect?.p ?? null,
        n: cell.n,
        events: cell.events,
        note: cell.effect ? (result.outcome.type === 'binary' ? `risk ${cell.risk}` : `mean ${cell.mean}`) : 'reference cell',
      });
    }
  }
  return rows;
}

function withinStratumRows({ result, measure, levels, exposure }: CsvContext): CsvRow[] {
  const rows: CsvRow[] = [];
  for (const level of levels) {
    const stratum = result.strata.find((entry) => entry.level === level);
    if (!stratum) continue;
    rows.push({
      section: 'within-stratum',
      level,
      measure: result.exposure.type === 'continuous' ? `${measure.code} per unit of ${exposure}` : `${measure.code} of ${exposure} = ${result.exposure.level} vs ${result.exposure.reference}`,
      estimate: stratum.effect.estimate,
      lower: stratum.effect.lower,
      upper: stratum.effect.upper,
      p: stratum.effect.p,
      p_holm: stratum.pAdjusted.holm,
      p_bh: stratum.pAdjusted.bh,
      n: stratum.n,
      events: stratum.events,
    });
  }
  return rows;
}

function modifierWithinArmRows({ result, measure, levels, modifier }: CsvContext): CsvRow[] {
  return inDisplayOrder(levels, result.modifierEffects).map((entry) => ({
    section: 'modifier-within-arm',
    level: entry.level,
    arm: entry.exposure,
    measure: `${measure.code} of ${modifier} = ${entry.level} vs ${result.modifier.reference}`,
    estimate: entry.effect.estimate,
    lower: entry.effect.lower,
    upper: entry.effect.upper,
    p: entry.effect.p,
  }));
}

function interactionRows({ result, measure, levels, exposure, modifier }: CsvContext): CsvRow[] {
  const rows: CsvRow[] = [];
  for (const entry of inDisplayOrder(levels, result.interaction.additive)) {
    const reference = `reference ${exposure} = ${entry.reference.exposure}, ${modifier} = ${entry.reference.modifier}`;
    const measures: [string, typeof entry.reri][] = [['RERI', entry.reri], ['AP', entry.ap], ['AP*', entry.apStar], ['S', entry.s]];
    for (const [name, value] of measures) {
      if (!value) continue;
      rows.push({ section: 'additive', level: entry.level, measure: name, estimate: value.estimate, lower: value.lower, upper: value.upper, note: `${value.method}; ${reference}` });
    }
    if (entry.differenceInDifferences) {
      const did = entry.differenceInDifferences;
      rows.push({ section: 'additive', level: entry.level, measure: 'difference in differences', estimate: did.estimate, lower: did.lower, upper: did.upper, p: did.p, note: reference });
    }
  }
  for (const entry of inDisplayOrder(levels, result.interaction.multiplicative)) {
    rows.push({ section: 'multiplicative', level: entry.level, measure: measure.interactionName, estimate: entry.estimate, lower: entry.lower, upper: entry.upper, p: entry.p });
  }
  const omnibus = result.interaction.omnibus;
  rows.push({
    section: 'omnibus',
    measure: OMNIBUS_LABEL[omnibus.test],
    statistic: omnibus.statistic,
    df: omnibus.df,
    p: omnibus.p,
    note: omnibus.df2 !== null ? `denominator df ${omnibus.df2}` : null,
  });
  return rows;
}

function stratifiedRows({ result }: CsvContext): CsvRow[] {
  const tables = result.stratifiedTables;
  if (!tables) return [];
  const pooled: [string, { estimate: number | null; lower: number | null; upper: number | null } | null][] = [
    ['Mantel-Haenszel OR (crude)', tables.mantelHaenszel.oddsRatio],
    ['Mantel-Haenszel RR (crude)', tables.mantelHaenszel.riskRatio],
  ];
  // The pooled RD once per published variance, each labelled (Sato 1989, Greenland-Robins 1985).
  const rd = tables.mantelHaenszel.riskDifference;
  if (rd) for (const entry of tables.mantelHaenszel.riskDifferenceVariances ?? []) pooled.push([`Mantel-Haenszel RD (crude), ${entry.label}`, { estimate: rd.estimate, lower: entry.lower, upper: entry.upper }]);
  const rows: CsvRow[] = [];
  for (const [name, value] of pooled) if (value) rows.push({ section: 'stratified', measure: name, estimate: value.estimate, lower: value.lower, upper: value.upper });
  return rows;
}

function continuousRows({ result, measure, exposure, modifier }: CsvContext): CsvRow[] {
  const rows: CsvRow[] = (result.slopes ?? []).map((slope) => ({
    section: 'simple-slope', level: slope.label, measure: `${measure.code} of ${exposure} at ${modifier} = ${slope.at}`, estimate: slope.estimate, lower: slope.lower, upper: slope.upper, p: slope.p,
  }));
  const jn = result.johnsonNeyman;
  if (jn) {
    const words = effectRangeInWords(jn, { modifier, alpha: result.alpha, spread: result.spread });
    words.boundaries.forEach((boundary) => {
      rows.push({ section: 'johnson-neyman', measure: 'boundary', estimate: boundary.at, note: boundary.text });
    });
    rows.push({ section: 'johnson-neyman', measure: 'sentence', note: words.sentence });
  }
  return rows;
}

/** The variance in use with its clusters, frequency weights, crude rates and the overdispersion check. */
function varianceRateRows({ result, exposure, modifier }: CsvContext): CsvRow[] {
  const rows: CsvRow[] = [{ section: 'variance', measure: varianceName(result), n: result.clustering?.clusters ?? null, note: result.clustering ? `clusters of ${result.clustering.column}; every interval uses this variance` : null }];
  if (result.weights) rows.push({ section: 'weights', level: result.weights.column, measure: 'rows standing for units', n: result.weights.units, note: `${result.weights.rows} rows` });
  const rates = result.rates;
  if (rates) {
    const unit = personTimeUnit(rates);
    for (const cell of rates.cells) {
      rows.push({
        section: 'rate', level: cell.modifier, arm: cell.exposure, measure: `events per ${rates.per} ${unit}`, estimate: cell.ratePer1000, events: cell.events,
        note: `person-time ${cell.personTime} (${cell.modifier === null ? exposure : `${exposure} × ${modifier}`})`,
      });
    }
    rows.push({ section: 'overdispersion', measure: 'Pearson chi-square / df', estimate: rates.overdispersion.ratio, statistic: rates.overdispersion.pearsonChiSquare, df: rates.overdispersion.df });
  }
  return rows;
}

/** The covariates, the rows analysed and left out, the multiplicity note and the warnings. */
function contextRows({ result }: CsvContext): CsvRow[] {
  const rows: CsvRow[] = [];
  for (const covariate of result.covariates) {
    rows.push({ section: 'covariate', level: covariate.column, note: covariate.type === 'categorical' ? `categorical, reference ${covariate.reference}` : 'continuous' });
  }
  rows.push({ section: 'rows', measure: 'analysed', n: result.n });
  rows.push({ section: 'rows', measure: 'left out for missing values', n: result.dropped });
  for (const entry of result.missingByColumn ?? []) {
    rows.push({ section: 'rows', level: entry.column, measure: 'missing in this column', n: entry.rows, note: 'a left-out row can be missing in more than one column' });
  }
  rows.push({ section: 'multiplicity', note: multiplicityNote(result) });
  for (const warning of result.warnings) rows.push({ section: 'warning', measure: warning.code, note: warning.message });
  return rows;
}

/**
 * The results as CSV: the caution first (one record per sentence, padded to the full
 * width so every record has the same number of fields), then a header and one record per
 * estimate, with unrounded numbers.
 */
export function resultCsv(result: Result, spec: Spec): string {
  const width = CSV_COLUMNS.length;
  const pad = (fields: (string | number | null)[]) => [...fields, ...Array<string>(Math.max(0, width - fields.length)).fill('')];
  let out = '';
  for (const sentence of RESULT_CAUTIONS) out += csvRecord(pad(['Caution', sentence]));
  out += csvRecord(pad(['Caution version', CAUTION_VERSION]));
  out += csvRecord(pad(['Specification', specInWords(spec, { modifierLevels: result.modifier.levels })]));
  out += csvRecord(pad(['Engine', result.engineVersion]));
  out += csvRecord(CSV_COLUMNS);

  const context: CsvContext = { result, measure: measureInfo(result), levels: displayLevels(result), exposure: result.exposure.column, modifier: result.modifier.column };
  // A subgroup screen: its own records (every modifier), then what the analysis used.
  const rows = result.screen ? [...screenRows(result), ...contextRows(context)] : [
    ...jointRows(context),
    ...withinStratumRows(context),
    ...eValueRows(result, context.levels),
    ...absoluteRows(result, context.levels),
    ...modifierWithinArmRows(context),
    ...interactionRows(context),
    ...doseTrendCsvRows(result).map((row): CsvRow => row),
    ...stratifiedRows(context),
    ...continuousRows(context),
    ...varianceRateRows(context),
    ...contextRows(context),
  ];
  for (const row of rows) out += csvRecord(CSV_COLUMNS.map((name) => row[name] ?? null));
  return out;
}
