/**
 * The results of a run as tables, sentences and CSV, built only from the engine's result
 * (ResultSchema) and the specification it ran. The layout follows Knol and VanderWeele,
 * "Recommendations for presenting analyses of effect modification and interaction",
 * Int J Epidemiol 2012;41:514-520: every intervention × modifier cell against one
 * reference with its counts, the intervention's effect within each modifier level, the
 * interaction on the additive (RERI, AP, S) and multiplicative scales, and the
 * confounders adjusted for.
 *
 * Number formats (our own): ratios 2 decimals; RERI, AP, AP* and mean differences 2
 * decimals; risk differences 3 decimals; risks as percentages with 1 decimal; p-values
 * "<0.001" or 3 decimals; intervals "1.23 (0.98 to 1.54)"; a true minus sign (U+2212) in
 * text for print, while every cell also carries the unrounded number it shows.
 */
import type { Result, Spec } from '../../engine/boundary/schemas';
import { CAUTION_VERSION, RESULT_CAUTIONS } from '../../lib/cautions';
import { naturalOrder } from '../analyses/formColumns';
import { MEASURE_LABEL, MODEL_LABEL, MULTIPLICITY_LABEL } from '../analyses/specRules';
import { percentText, specInWords } from '../analyses/specWords';
import { csvField, csvRecord } from '../../lib/csv';

// ---------------------------------------------------------------------------------------
// Formatting
// ---------------------------------------------------------------------------------------

/** The typographic minus used in displayed numbers. */
export const MINUS = '\u2212';
/** Shown where a number is not estimable (null in the result). */
export const NOT_ESTIMABLE = '—';

/** How a number is shown. */
export type NumberKind = 'ratio' | 'difference' | 'risk-difference' | 'percent' | 'mean' | 'count' | 'statistic' | 'modifier';

/** Fixed decimals with a true minus sign; "—" for null or non-finite values. */
export function fixed(value: number | null | undefined, decimals: number): string {
  if (value === null || value === undefined || !Number.isFinite(value)) return NOT_ESTIMABLE;
  const text = value.toFixed(decimals);
  // -0.00 reads as 0.00: no sign on a value that rounds to zero.
  if (/^-0\.?0*$/.test(text)) return text.slice(1);
  return text.startsWith('-') ? `${MINUS}${text.slice(1)}` : text;
}

/** A ratio with 2 decimals; below 0.01, two significant digits so it never shows as 0.00. */
export function formatRatio(value: number | null | undefined): string {
  if (value === null || value === undefined || !Number.isFinite(value)) return NOT_ESTIMABLE;
  if (Math.abs(value) < 0.01 && value !== 0) return fixed(Number(value.toPrecision(2)), Math.max(2, 1 - Math.floor(Math.log10(Math.abs(value)))));
  return fixed(value, 2);
}

/** A p-value: "<0.001" below 0.001, else 3 decimals. */
export function formatP(p: number | null | undefined): string {
  if (p === null || p === undefined || !Number.isFinite(p)) return NOT_ESTIMABLE;
  if (p < 0.001) return '<0.001';
  return p.toFixed(3);
}

/** A count with thousands separators: 12000 → "12,000". */
export function formatCount(value: number | null | undefined): string {
  if (value === null || value === undefined || !Number.isFinite(value)) return NOT_ESTIMABLE;
  return Math.round(value).toLocaleString('en-GB');
}

/** Formats a number of a kind. */
export function formatNumber(value: number | null | undefined, kind: NumberKind): string {
  switch (kind) {
    case 'ratio':
      return formatRatio(value);
    case 'risk-difference':
      return fixed(value, 3);
    case 'percent':
      return value === null || value === undefined ? NOT_ESTIMABLE : `${fixed(value * 100, 1)} %`;
    case 'count':
      return formatCount(value);
    case 'statistic':
      return fixed(value, 2);
    case 'modifier':
      return fixed(value, 1);
    default:
      return fixed(value, 2);
  }
}

/** "1.23 (0.98 to 1.54)"; the limits alone when there is no estimate would be meaningless, so "—". */
export function formatInterval(estimate: number | null, lower: number | null, upper: number | null, kind: NumberKind): string {
  const point = formatNumber(estimate, kind);
  if (point === NOT_ESTIMABLE) return NOT_ESTIMABLE;
  if (lower === null || upper === null || !Number.isFinite(lower) || !Number.isFinite(upper)) return `${point} (${NOT_ESTIMABLE})`;
  return `${point} (${formatNumber(lower, kind)} to ${formatNumber(upper, kind)})`;
}

/** Decimals for values of a continuous modifier, from the width of its observed range. */
export function modifierDecimals(observed: readonly [number, number] | null | undefined): number {
  if (!observed) return 1;
  const width = Math.abs(observed[1] - observed[0]);
  if (!(width > 0)) return 2;
  return Math.min(4, Math.max(1, 1 - Math.floor(Math.log10(width))));
}

// ---------------------------------------------------------------------------------------
// Cells
// ---------------------------------------------------------------------------------------

/** A displayed number: its text and the unrounded value it came from. */
export interface NumberCell {
  text: string;
  value: number | null;
  testId?: string;
}

/** A displayed estimate with its interval. */
export interface IntervalCell {
  text: string;
  estimate: number | null;
  lower: number | null;
  upper: number | null;
  testId?: string;
}

function numberCell(value: number | null | undefined, kind: NumberKind, testId?: string): NumberCell {
  return { text: formatNumber(value, kind), value: value ?? null, ...(testId ? { testId } : {}) };
}

function pCell(value: number | null | undefined, testId?: string): NumberCell {
  return { text: formatP(value), value: value ?? null, ...(testId ? { testId } : {}) };
}

function intervalCell(
  interval: { estimate: number | null; lower: number | null; upper: number | null } | null | undefined,
  kind: NumberKind,
  testId?: string,
): IntervalCell {
  const estimate = interval?.estimate ?? null;
  const lower = interval?.lower ?? null;
  const upper = interval?.upper ?? null;
  return { text: formatInterval(estimate, lower, upper, kind), estimate, lower, upper, ...(testId ? { testId } : {}) };
}

// ---------------------------------------------------------------------------------------
// The tables
// ---------------------------------------------------------------------------------------

export interface MeasureInfo {
  code: Result['effectMeasure'];
  /** "odds ratio" */
  name: string;
  /** Whether it is a ratio (null value 1, log axis) or a difference (null value 0). */
  ratio: boolean;
  nullValue: number;
  kind: NumberKind;
  /** The multiplicative-scale interaction: "ratio of odds ratios" or "difference in mean differences". */
  interactionName: string;
}

/** How the result's effect measure is named and shown. */
export function measureInfo(result: Pick<Result, 'effectMeasure'>): MeasureInfo {
  const code = result.effectMeasure;
  const ratio = code === 'OR' || code === 'RR';
  const name = MEASURE_LABEL[code];
  return {
    code,
    name,
    ratio,
    nullValue: ratio ? 1 : 0,
    kind: ratio ? 'ratio' : code === 'RD' ? 'risk-difference' : 'difference',
    interactionName: ratio ? `ratio of ${name}s` : `difference in ${name}s`,
  };
}

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
}

export interface WarningView {
  code: string;
  title: string;
  message: string;
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
  /** `alternative`: the pooled RD's limits under the Greenland-Robins (1985) variance (the main limits use Sato's). */
  mantelHaenszel: { label: string; pooled: IntervalCell; homogeneity: string | null; alternative: { label: string; pooled: IntervalCell } | null } | null;
  continuous: {
    slopes: SlopeRowView[];
    johnsonNeyman: string | null;
    observed: [number, number] | null;
    mean: NumberCell;
    sd: NumberCell;
  } | null;
  covariates: { column: string; text: string }[];
  multiplicityNote: string;
  warnings: WarningView[];
  /** The minimum detectable interaction in words. */
  powerNote: string | null;
}

/** Modifier levels for display: reference first, the rest in natural order. */
export function displayLevels(result: Pick<Result, 'modifier'>): string[] {
  const levels = result.modifier.levels ?? [];
  const reference = result.modifier.reference ?? levels[0];
  if (reference === undefined) return [];
  return [reference, ...naturalOrder(levels.filter((level) => level !== reference))];
}

const OMNIBUS_LABEL: Record<Result['interaction']['omnibus']['test'], string> = {
  'likelihood-ratio': 'Likelihood-ratio test of all product terms',
  F: 'F test of all product terms',
  wald: 'Wald test of all product terms',
  'wald-robust': 'Robust Wald test of all product terms',
};

const WARNING_TITLE: Record<string, string> = {
  SEPARATION: 'A stratum with no events or only events',
  SPARSE_STRATUM: 'Few events in a stratum',
  ZERO_CELL: 'An empty cell in a 2 × 2 table',
  WOOLF_CORRECTED: 'Continuity correction in the Woolf test',
  COMMON_OUTCOME_OR_RERI: 'Common outcome: odds ratios overstate risk ratios',
  PREVENTIVE_EXPOSURE: 'The intervention lowers risk',
  S_UNDEFINED: 'Synergy index not defined',
  MOVER_RERI_ONLY: 'Interval methods differ by measure',
  BOOTSTRAP_FAILED_REPLICATES: 'Some bootstrap refits failed',
  OMNIBUS_WALD: 'The omnibus test is a Wald test',
  EMPTY_COVARIATE_LEVEL: 'A covariate level without rows',
  LOG_BINOMIAL_FALLBACK: 'The log-binomial model was replaced',
  NOT_CONVERGED: 'The model did not converge',
  NEAR_SINGULAR_DESIGN: 'Nearly redundant terms',
  FITTED_RISK_ABOVE_ONE: 'Fitted risks above one',
  ROWS_DROPPED: 'Rows left out for missing values',
  POSSIBLE_MISSING_CODE: 'A level that may stand for a missing value',
};

/**
 * Which columns the left-out rows were missing in, as words: `age 7, arm 3`. A row can be
 * missing in more than one column. Results made before the per-column counts give ''.
 */
export function missingInWords(result: Pick<Result, 'missingByColumn'>): string {
  return (result.missingByColumn ?? []).map((entry) => `${entry.column} ${formatCount(entry.rows)}`).join(', ');
}

/** Engine warnings with a short title each; the engine's message is already plain words. */
export function warningsInWords(result: Pick<Result, 'warnings'>): WarningView[] {
  return result.warnings.map((warning) => ({
    code: warning.code,
    title: WARNING_TITLE[warning.code] ?? 'Note from the engine',
    message: warning.message,
  }));
}

/**
 * The multiplicity note: how many strata (or tests) were examined and which adjustment
 * the summary treats as primary.
 */
export function multiplicityNote(result: Pick<Result, 'modifier' | 'strata' | 'multiplicity' | 'alpha' | 'slopes'>): string {
  const alpha = `${percentText(result.alpha)} %`;
  if (result.modifier.type === 'continuous') {
    const slopes = result.slopes?.length ?? 0;
    return (
      `${result.modifier.column} is continuous, so effect modification rests on one product term and its single test. ` +
      `The ${slopes} simple slope${slopes === 1 ? '' : 's'} and the Johnson-Neyman boundaries describe that one model and are not adjusted for multiplicity.`
    );
  }
  const k = result.strata.length;
  const base = `The intervention's effect was estimated in ${k} strata of ${result.modifier.column}, so ${k} within-stratum tests were made.`;
  const judge = ' Judge effect modification by the interaction tests, not by which strata reach significance.';
  if (result.multiplicity === 'none') {
    // With k independent tests at level α, P(at least one false alarm) = 1 − (1 − α)^k.
    const familywise = 1 - (1 - result.alpha) ** k;
    return `${base} No adjustment was chosen: with ${k} tests at the ${alpha} level the chance of at least one false alarm can reach ${fixed(familywise * 100, 0)} %. Holm- and Benjamini-Hochberg-adjusted p-values are shown as well.${judge}`;
  }
  const what =
    result.multiplicity === 'holm'
      ? 'which keeps the chance of any false alarm across them at or below'
      : 'which keeps the expected share of false alarms among the significant strata at or below';
  return `${base} The primary p-values use the ${MULTIPLICITY_LABEL[result.multiplicity]} adjustment across the ${k} strata, ${what} ${alpha}.${judge}`;
}

/**
 * The Johnson-Neyman boundaries in words, e.g. "The intervention's effect is significant
 * at the 5 % level where frailty_score is below 4.2 (observed range 1.0 to 9.0)."
 *
 * The significance region on the whole line follows from the engine's `significant`
 * (outside or inside the boundaries, everywhere or nowhere; with one boundary, above it
 * for "outside" and below it for "inside"), then is intersected with the observed range.
 */
export function johnsonNeymanSentence(
  jn: NonNullable<Result['johnsonNeyman']>,
  options: { modifier: string; alpha: number; subject?: string },
): string {
  const subject = options.subject ?? "The intervention's effect";
  const decimals = modifierDecimals(jn.observed);
  const show = (value: number) => fixed(value, decimals);
  const [min, max] = jn.observed;
  const range = `(observed range ${show(min)} to ${show(max)})`;
  const level = `at the ${percentText(options.alpha)} % level`;
  const bounds: readonly number[] = jn.bounds ?? [];

  // Significant intervals on the real line.
  let regions: [number, number][];
  if (jn.significant === 'everywhere') regions = [[-Infinity, Infinity]];
  else if (jn.significant === 'nowhere') regions = [];
  else if (bounds.length === 0) regions = [];
  else if (bounds.length === 1) regions = jn.significant === 'outside' ? [[bounds[0], Infinity]] : [[-Infinity, bounds[0]]];
  else if (jn.significant === 'outside') regions = [[-Infinity, bounds[0]], [bounds[1], Infinity]];
  else regions = [[bounds[0], bounds[1]]];

  const clipped = regions
    .map(([from, to]) => [Math.max(from, min), Math.min(to, max)] as [number, number])
    .filter(([from, to]) => to > from);
  const outsideBounds = bounds.filter((bound) => bound < min || bound > max);
  const boundaryNote =
    bounds.length > 0 && outsideBounds.length === bounds.length
      ? `; the Johnson-Neyman boundar${bounds.length === 1 ? 'y' : 'ies'} (${bounds.map(show).join(' and ')}) lie${bounds.length === 1 ? 's' : ''} outside the observed range`
      : '';

  if (clipped.length === 0) {
    return `${subject} is not significant ${level} anywhere in the observed range of ${options.modifier} (${show(min)} to ${show(max)})${boundaryNote}.`;
  }
  if (clipped.length === 1 && clipped[0][0] <= min && clipped[0][1] >= max) {
    return `${subject} is significant ${level} across the whole observed range of ${options.modifier} (${show(min)} to ${show(max)})${boundaryNote}.`;
  }
  const pieces = clipped.map(([from, to]) => {
    if (from <= min) return `below ${show(to)}`;
    if (to >= max) return `above ${show(from)}`;
    return `between ${show(from)} and ${show(to)}`;
  });
  return `${subject} is significant ${level} where ${options.modifier} is ${pieces.join(' or ')} ${range}.`;
}

/**
 * The smallest interaction the data could detect, per level: the engine's
 * normal-approximation planning block (Brookes et al., J Clin Epidemiol 2004;57:229).
 */
export function planningInWords(result: Pick<Result, 'planning'>, measure: MeasureInfo): string | null {
  const { planning } = result;
  const clauses = planning.levels
    .filter((level) => level.detectable.lower !== null && level.detectable.upper !== null)
    .map((level) => {
      const lower = formatNumber(level.detectable.lower, measure.ratio ? 'ratio' : measure.kind);
      const upper = formatNumber(level.detectable.upper, measure.ratio ? 'ratio' : measure.kind);
      return `below ${lower} or above ${upper} (${level.level})`;
    });
  if (clauses.length === 0) return null;
  const what = measure.ratio ? `a ${measure.interactionName}` : `an interaction (${measure.interactionName})`;
  return (
    `With ${formatCount(planning.n)} rows, ${what} would be detected with ${percentText(planning.targetPower)} % power at the ` +
    `${percentText(planning.alpha)} % level only if it were ${clauses.join('; ')}; a smaller interaction could easily be missed.`
  );
}

function referenceText(reference: { exposure: string; modifier: string }, exposure: string, modifier: string): string {
  return `${exposure} = ${reference.exposure}, ${modifier} = ${reference.modifier}`;
}

/** Builds every table of the results page from the result and its specification. */
export function buildResultTables(result: Result, spec: Spec): ResultTables {
  const measure = measureInfo(result);
  const exposureColumn = result.exposure.column;
  const modifierColumn = result.modifier.column;
  const levels = displayLevels(result);
  const binary = result.outcome.type === 'binary';
  const ciLabel = `${percentText(result.ciLevel)} % CI`;
  const additiveMethod = (method: string | undefined) => (method === 'bootstrap' ? 'percentile bootstrap' : method === 'mover' ? 'MOVER' : method === 'delta' ? 'delta method' : null);

  let joint: ResultTables['joint'] = null;
  const modifierWithinArms: ResultTables['modifierWithinArms'] = [];
  if (result.modifier.type === 'categorical' && result.joint) {
    const exposureLevels: [string, string] = [result.exposure.reference, result.exposure.level];
    const rows: JointRowView[] = levels.map((level) => {
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
    });
    joint = { referenceLabel: referenceText(result.joint.reference, exposureColumn, modifierColumn), exposureLevels, rows };
    for (const level of levels.slice(1)) {
      modifierWithinArms.push({
        level,
        cells: exposureLevels.map((exposure) => ({
          exposure,
          effect: intervalCell(result.modifierEffects.find((entry) => entry.level === level && entry.exposure === exposure)?.effect, measure.kind, `modifier-effect-${exposure}-${level}`),
        })),
      });
    }
  }

  // Additive and multiplicative entries are keyed by level name; for a continuous
  // modifier they are "+1 SD of x" (additive) and "per 1 unit of x" (multiplicative).
  const interactionLevels =
    result.modifier.type === 'categorical'
      ? levels.slice(1)
      : [...new Set([...result.interaction.multiplicative.map((entry) => entry.level), ...result.interaction.additive.map((entry) => entry.level)])];
  const interaction: InteractionRowView[] = interactionLevels.map((level) => {
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

  const omnibus = result.interaction.omnibus;
  const statisticName = omnibus.test === 'F' ? 'F' : 'χ²';
  const omnibusView = {
    label: OMNIBUS_LABEL[omnibus.test],
    statistic: { ...numberCell(omnibus.statistic, 'statistic', 'omnibus-statistic'), text: `${statisticName} = ${formatNumber(omnibus.statistic, 'statistic')}` },
    df: omnibus.df2 !== null ? `${omnibus.df} and ${formatCount(omnibus.df2)} df` : `${omnibus.df} df`,
    p: pCell(omnibus.p, 'omnibus-p'),
  };

  let mantelHaenszel: ResultTables['mantelHaenszel'] = null;
  const tables = result.stratifiedTables;
  if (tables) {
    const pooled = measure.code === 'OR' ? tables.mantelHaenszel.oddsRatio : measure.code === 'RR' ? tables.mantelHaenszel.riskRatio : measure.code === 'RD' ? tables.mantelHaenszel.riskDifference : null;
    if (pooled) {
      const variances = tables.mantelHaenszel.riskDifferenceVariances ?? [];
      const homogeneity = measure.code === 'OR' ? (tables.homogeneity.breslowDayTarone ?? tables.homogeneity.breslowDay) : tables.homogeneity.woolf;
      const homogeneityName = measure.code === 'OR' ? (tables.homogeneity.breslowDayTarone ? 'Breslow-Day test with Tarone\'s correction' : 'Breslow-Day test') : 'Woolf test';
      mantelHaenszel = {
        label: `Mantel-Haenszel pooled ${measure.name} (crude: not adjusted for the covariates)${measure.code === 'RD' ? `, limits from the ${variances[0]?.label ?? 'Sato (1989) variance'}` : ''}`,
        pooled: intervalCell(pooled, measure.kind, 'mh-pooled'),
        alternative: measure.code === 'RD' && variances[1]
          ? { label: `With the ${variances[1].label}`, pooled: intervalCell({ estimate: pooled.estimate, lower: variances[1].lower, upper: variances[1].upper }, measure.kind, 'mh-pooled-greenland-robins') }
          : null,
        homogeneity:
          homogeneity && measure.code !== 'RD'
            ? `${homogeneityName} of homogeneity: χ² = ${formatNumber(homogeneity.statistic, 'statistic')} on ${homogeneity.df} df, p ${formatP(homogeneity.p).startsWith('<') ? formatP(homogeneity.p) : `= ${formatP(homogeneity.p)}`}`
            : null,
      };
    }
  }

  let continuous: ResultTables['continuous'] = null;
  if (result.modifier.type === 'continuous') {
    const decimals = modifierDecimals(result.modifier.observed);
    continuous = {
      slopes: (result.slopes ?? []).map((slope, index) => ({
        label: slope.label,
        at: { text: fixed(slope.at, decimals), value: slope.at, testId: `slope-at-${index}` },
        effect: intervalCell(slope, measure.kind, `slope-effect-${index}`),
        p: pCell(slope.p, `slope-p-${index}`),
      })),
      johnsonNeyman: result.johnsonNeyman ? johnsonNeymanSentence(result.johnsonNeyman, { modifier: modifierColumn, alpha: result.alpha }) : null,
      observed: result.modifier.observed,
      mean: { text: fixed(result.modifier.mean, decimals + 1), value: result.modifier.mean },
      sd: { text: fixed(result.modifier.sd, decimals + 1), value: result.modifier.sd },
    };
  }

  const covariates = result.covariates.map((covariate) => ({
    column: covariate.column,
    text: covariate.type === 'categorical' ? `${covariate.column} (reference ${covariate.reference ?? 'first level'})` : covariate.column,
  }));

  const model = result.model;
  const fallback = model.family !== model.requestedFamily ? ` (${MODEL_LABEL[model.requestedFamily].toLowerCase()} was asked for; see the warnings)` : '';
  const missing = missingInWords(result);
  const modelLine =
    `${MODEL_LABEL[model.family]}${fallback}; ${formatCount(result.n)} rows analysed` +
    `${result.dropped > 0 ? `, ${formatCount(result.dropped)} left out for missing values${missing ? ` (missing in ${missing})` : ''}` : ''}; ` +
    `${model.converged ? (model.iterations > 0 ? `converged in ${model.iterations} iterations` : 'fitted directly') : 'did not converge'}; ` +
    `${model.standardErrors === 'model' ? 'model-based' : model.standardErrors} standard errors.`;

  const powerNote = planningInWords(result, measure);

  return {
    measure,
    ciLabel,
    exposure: result.exposure,
    modifier: { column: modifierColumn, type: result.modifier.type, reference: result.modifier.reference, levels },
    modelLine,
    specInWords: specInWords(spec, { modifierLevels: result.modifier.levels }),
    joint,
    modifierWithinArms,
    interaction,
    omnibus: omnibusView,
    mantelHaenszel,
    continuous,
    covariates,
    multiplicityNote: multiplicityNote(result),
    warnings: warningsInWords(result),
    powerNote,
  };
}

// ---------------------------------------------------------------------------------------
// CSV
// ---------------------------------------------------------------------------------------

// csvField and csvRecord live in src/lib/csv.ts (the audit export uses them too).
export { csvField, csvRecord };

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

/**
 * The results as CSV: the caution first (one record per sentence, padded to the full
 * width so every record has the same number of fields), then a header and one record per
 * estimate, with unrounded numbers.
 */
export function resultCsv(result: Result, spec: Spec): string {
  const measure = measureInfo(result);
  const width = CSV_COLUMNS.length;
  const pad = (fields: (string | number | null)[]) => [...fields, ...Array<string>(Math.max(0, width - fields.length)).fill('')];
  let out = '';
  for (const sentence of RESULT_CAUTIONS) out += csvRecord(pad(['Caution', sentence]));
  out += csvRecord(pad(['Caution version', CAUTION_VERSION]));
  out += csvRecord(pad(['Specification', specInWords(spec, { modifierLevels: result.modifier.levels })]));
  out += csvRecord(pad(['Engine', result.engineVersion]));
  out += csvRecord(CSV_COLUMNS);

  const rows: CsvRow[] = [];
  const exposure = result.exposure.column;
  const modifier = result.modifier.column;
  const levels = displayLevels(result);
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
  for (const level of levels) {
    const stratum = result.strata.find((entry) => entry.level === level);
    if (!stratum) continue;
    rows.push({
      section: 'within-stratum',
      level,
      measure: `${measure.code} of ${exposure} = ${result.exposure.level} vs ${result.exposure.reference}`,
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
  // Entries in display order (reference first, then natural order), whatever order the engine used.
  const rank = (level: string) => {
    const index = levels.indexOf(level);
    return index === -1 ? levels.length : index;
  };
  const byLevel = <T extends { level: string }>(entries: readonly T[]) => [...entries].sort((a, b) => rank(a.level) - rank(b.level));
  for (const entry of byLevel(result.modifierEffects)) {
    rows.push({
      section: 'modifier-within-arm',
      level: entry.level,
      arm: entry.exposure,
      measure: `${measure.code} of ${modifier} = ${entry.level} vs ${result.modifier.reference}`,
      estimate: entry.effect.estimate,
      lower: entry.effect.lower,
      upper: entry.effect.upper,
      p: entry.effect.p,
    });
  }
  for (const entry of byLevel(result.interaction.additive)) {
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
  for (const entry of byLevel(result.interaction.multiplicative)) {
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
  const tables = result.stratifiedTables;
  if (tables) {
    const pooled: [string, { estimate: number | null; lower: number | null; upper: number | null } | null][] = [
      ['Mantel-Haenszel OR (crude)', tables.mantelHaenszel.oddsRatio],
      ['Mantel-Haenszel RR (crude)', tables.mantelHaenszel.riskRatio],
    ];
    // The pooled RD once per published variance, each labelled (Sato 1989, Greenland-Robins 1985).
    const rd = tables.mantelHaenszel.riskDifference;
    if (rd) for (const entry of tables.mantelHaenszel.riskDifferenceVariances ?? []) pooled.push([`Mantel-Haenszel RD (crude), ${entry.label}`, { estimate: rd.estimate, lower: entry.lower, upper: entry.upper }]);
    for (const [name, value] of pooled) if (value) rows.push({ section: 'stratified', measure: name, estimate: value.estimate, lower: value.lower, upper: value.upper });
  }
  (result.slopes ?? []).forEach((slope) => {
    rows.push({ section: 'simple-slope', level: slope.label, measure: `${measure.code} of ${exposure} at ${modifier} = ${slope.at}`, estimate: slope.estimate, lower: slope.lower, upper: slope.upper, p: slope.p });
  });
  const jn = result.johnsonNeyman;
  if (jn) {
    (jn.bounds ?? []).forEach((bound, index) => {
      rows.push({ section: 'johnson-neyman', measure: 'boundary', estimate: bound, note: jn.boundsInRange[index] ? 'inside the observed range' : 'outside the observed range' });
    });
    rows.push({ section: 'johnson-neyman', measure: 'sentence', note: johnsonNeymanSentence(jn, { modifier, alpha: result.alpha }) });
  }
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

  for (const row of rows) out += csvRecord(CSV_COLUMNS.map((name) => row[name] ?? null));
  return out;
}
