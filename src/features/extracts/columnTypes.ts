/**
 * The shapes of the columns the reader builds (see columnAccumulator.ts) and the options
 * that shape them.
 */
import type { PatternCounts } from './valuePatterns';

/** Options of {@link ColumnSet}. */
export interface ColumnSetOptions {
  /** Column names to drop while reading (compared ignoring case and surrounding spaces). */
  dropColumns?: readonly string[];
  /** Distinct text values kept per column before it stops learning levels. Default 50,000. */
  maxLevels?: number;
  /** Field values that mean "missing" besides the shared tokens (compared ignoring letter case). */
  missingTokens?: readonly string[];
  /** Decimal separator of numbers. Default ".". A comma is only possible with a non-comma delimiter. */
  decimalSeparator?: '.' | ',';
  /**
   * Size of the whole upload in bytes when known (Content-Length). Columns then reserve
   * room for the rows the file will probably hold, and re-estimate from the bytes per row
   * seen so far when they must grow, instead of doubling.
   */
  expectedBytes?: number;
  /**
   * Rows the file holds when already known (a second read of a stored file): columns then
   * reserve exactly that many rows and never grow.
   */
  expectedRows?: number;
  /**
   * Which of the file's columns to build (by header name and 0-based position); the others
   * are skipped as they pass, like dropped ones, but are not listed as dropped. Default: all.
   */
  onlyColumns?: (name: string, index: number) => boolean;
}

/** A finished column of numbers. */
export interface NumericColumnData {
  kind: 'numeric';
  name: string;
  /** 0-based position in the file's header. */
  index: number;
  rowCount: number;
  /** One value per row; NaN where missing. */
  values: Float64Array;
  /** Bit i set when row i is missing. */
  missing: Uint8Array;
  missingCount: number;
  /** Largest number of decimal places written, or -1 when some value used an exponent or had over 15 digits. */
  maxDecimals: number;
  /** How often each missing-value token occurred (only tokens met), in the tokens' order. */
  missingTokens: TokenCount[];
  patterns: PatternCounts;
}

/** A missing-value token (as the shared list spells it) and its count in a column. */
export interface TokenCount {
  token: string;
  count: number;
}

/** A finished dictionary-encoded text column. */
export interface TextColumnData {
  kind: 'text';
  name: string;
  index: number;
  rowCount: number;
  /** One code per row into `levels`; -1 where missing; -2 for values not kept past the level cap. */
  codes: Int32Array;
  /** Distinct values, sorted by UTF-16 code unit (locale-independent), so equal files encode equally. */
  levels: string[];
  /** Rows per level. */
  levelCounts: Int32Array;
  missing: Uint8Array;
  missingCount: number;
  /** The dictionary hit its cap; `levels` is incomplete and the column cannot be stored. */
  levelsOverflowed: boolean;
  /** The level cap in force. */
  levelCap: number;
  /** Non-missing values that were numbers (kept as text levels). */
  numericValueCount: number;
  /** The numbers of the column, NaN elsewhere (kept for the age rule); null when there were none. */
  numericValues: Float64Array | null;
  /** Per level, the file line where it first occurred (0 where unknown, e.g. numbers of a mixed column). */
  levelFirstLines: Int32Array;
  missingTokens: TokenCount[];
  patterns: PatternCounts;
}

/** A finished column of either kind. */
export type ColumnData = NumericColumnData | TextColumnData;
