/**
 * How the numbers of a result are shown, in our own formats: ratios 2 decimals; RERI, AP,
 * AP* and mean differences 2 decimals; risk differences 3 decimals; risks as percentages
 * with 1 decimal; p-values "<0.001" or 3 decimals; intervals "1.23 (0.98 to 1.54)"; a true
 * minus sign (U+2212) in text for print, while every cell also carries the unrounded
 * number it shows. Also how the result's effect measure is named and the order in which
 * its modifier levels are shown.
 */
import type { Result } from '@/engine/boundary/schemas';
import { naturalOrder } from '../analyses/formColumns';
import { MEASURE_LABEL } from '../analyses/specRules';

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

export function numberCell(value: number | null | undefined, kind: NumberKind, testId?: string): NumberCell {
  return { text: formatNumber(value, kind), value: value ?? null, ...(testId ? { testId } : {}) };
}

export function pCell(value: number | null | undefined, testId?: string): NumberCell {
  return { text: formatP(value), value: value ?? null, ...(testId ? { testId } : {}) };
}

export function intervalCell(
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
// The measure and the levels
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
export function measureInfo(result: Pick<Result, 'effectMeasure'> & { outcome?: Pick<Result['outcome'], 'type'> }): MeasureInfo {
  const code = result.effectMeasure;
  const ratio = code === 'OR' || code === 'RR';
  // A count outcome's ratio is a rate ratio (a ratio of mean counts without person-time).
  const name = result.outcome?.type === 'count' && code === 'RR' ? 'rate ratio' : MEASURE_LABEL[code];
  return {
    code,
    name,
    ratio,
    nullValue: ratio ? 1 : 0,
    kind: ratio ? 'ratio' : code === 'RD' ? 'risk-difference' : 'difference',
    interactionName: ratio ? `ratio of ${name}s` : `difference in ${name}s`,
  };
}

/** Modifier levels for display: reference first, the rest in natural order. */
export function displayLevels(result: Pick<Result, 'modifier'>): string[] {
  const levels = result.modifier.levels ?? [];
  const reference = result.modifier.reference ?? levels[0];
  if (reference === undefined) return [];
  return [reference, ...naturalOrder(levels.filter((level) => level !== reference))];
}
