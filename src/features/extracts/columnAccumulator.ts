/**
 * Builds columns from the reader's fields as they pass, without keeping the rows.
 *
 * Per column:
 * - numbers go into a growable Float64Array (NaN where the row is missing or text);
 * - text is dictionary-encoded as it arrives: an Int32Array of codes (-1 missing) into a
 *   list of distinct levels, keyed by the field's bytes, so no string is created for a
 *   value already seen. At `maxLevels` distinct values the dictionary stops learning and
 *   the column is flagged (its later new values get code -2 and are only screened);
 * - missing rows are a bitmap (bit `i & 7` of byte `i >> 3`);
 * - identifier-pattern counts for the screen (see valuePatterns.ts).
 *
 * A field is missing when it is empty after trimming spaces and tabs, or is one of the
 * shared missing-value tokens (NA, N/A, NULL, ".", "-", NaN in any letter case; see
 * src/engine/design/missingValues.ts) or an extra token of the caller's; each column counts
 * how often it met each token. A token is never a number or a level. A field is a number when it is
 * `[+-]digits[.digits][e[+-]digits]` (the decimal separator may be set to a comma for
 * semicolon files); anything else is text. A column with any text value is a text column
 * at the end; its numeric values then become levels in JavaScript's shortest round-trip
 * form (`007` -> `7`), while the raw digits were already screened as they passed.
 */
import { MISSING_TOKENS } from '@/engine/design/missingValues';
import { growInt32 } from './byteDictionary';
import { CapacityPlan, ColumnBuilder } from './columnBuilder';
import type { ColumnData, ColumnSetOptions } from './columnTypes';
import { ExtractRefusalError } from './extractRefusal';

export type { ColumnData, ColumnSetOptions, NumericColumnData, TextColumnData, TokenCount } from './columnTypes';
export { parseNumber } from './numberParsing';

/** Default cap on distinct text values kept per column. */
export const DEFAULT_MAX_LEVELS = 50_000;

/**
 * The line of data row `row` from the first `marks` (row, line) pairs of a column set (see
 * {@link ColumnSet.lineOfRow}).
 */
export function lineOfRowByMarks(markRows: Int32Array, markLines: Int32Array, marks: number, row: number): number {
  let low = 0;
  let high = marks - 1;
  if (high < 0 || markRows[0] > row) return row + 2;
  while (low < high) {
    const mid = (low + high + 1) >> 1;
    if (markRows[mid] <= row) low = mid;
    else high = mid - 1;
  }
  return markLines[low] + (row - markRows[low]);
}

/**
 * The reader's sink: routes every field to its column's builder, skipping dropped
 * columns (their fields are never copied or kept). Implements `CsvSink` from csvReader.ts.
 */
export class ColumnSet {
  private builders: (ColumnBuilder | null)[] = [];
  private readonly options: ColumnSetOptions;
  private readonly drop: Set<string>;
  private readonly plan: CapacityPlan;
  /** Names of the columns dropped while reading, in file order. */
  readonly droppedColumns: string[] = [];
  /**
   * Where rows start: (row, line) pairs wherever a record does not begin on the line after
   * the previous one (blank lines, quoted line breaks); in between lines follow rows.
   */
  private markRows = new Int32Array(16);
  private markLines = new Int32Array(16);
  private marks = 0;
  private records = 0;
  private nextLine = -1;

  /**
   * @param options see {@link ColumnSetOptions}
   */
  constructor(options: ColumnSetOptions = {}) {
    this.options = options;
    this.drop = new Set((options.dropColumns ?? []).map((name) => name.trim().toLowerCase()));
    this.plan = new CapacityPlan(options.expectedBytes, options.expectedRows);
  }

  /** The header's names, in file order (dropped and skipped columns included). */
  headerNames: string[] = [];

  /** Tells the columns how far into the upload the reader is (for sizing their arrays). */
  noteBytesRead(bytesRead: number): void {
    this.plan.bytesRead = bytesRead;
  }

  /** Creates one builder per kept column; refuses a drop list naming a column the header lacks. */
  header(names: readonly string[]): void {
    const decimalByte = (this.options.decimalSeparator ?? '.') === ',' ? 44 : 46;
    const tokenNames: string[] = [...MISSING_TOKENS];
    for (const extra of this.options.missingTokens ?? []) {
      const trimmed = extra.trim();
      if (trimmed !== '' && !tokenNames.some((t) => t.toUpperCase() === trimmed.toUpperCase())) tokenNames.push(trimmed);
    }
    const missingTokens = tokenNames.map((t) => Buffer.from(t.toUpperCase()));
    const capacity = this.plan.initial(names.length);
    const maxLevels = this.options.maxLevels ?? DEFAULT_MAX_LEVELS;
    const matched = new Set<string>();
    const only = this.options.onlyColumns;
    this.headerNames = names.slice();
    this.builders = names.map((name, index) => {
      const key = name.toLowerCase();
      if (this.drop.has(key)) {
        matched.add(key);
        this.droppedColumns.push(name);
        return null;
      }
      if (only && !only(name, index)) return null;
      return new ColumnBuilder(name, index, this.plan, capacity, { decimalByte, missingTokens, tokenNames, maxLevels });
    });
    const unmatched = (this.options.dropColumns ?? []).filter((name) => !matched.has(name.trim().toLowerCase()));
    if (unmatched.length > 0) {
      const list = unmatched.map((name) => `"${name}"`).join(', ');
      throw new ExtractRefusalError('unknown-drop-column', `Line 1: the header has no column named ${list} to drop.`, 1);
    }
  }

  /** One field; dropped columns ignore it. */
  field(column: number, bytes: Uint8Array, start: number, end: number): void {
    const builder = this.builders[column];
    if (builder !== null) builder.accept(bytes, start, end);
  }

  /** Notes the line where the record began (every builder counts its own rows). */
  endRecord(line?: number): void {
    const row = this.records++;
    if (line === undefined || line === this.nextLine) {
      this.nextLine++;
      return;
    }
    if (this.marks === this.markRows.length) {
      this.markRows = growInt32(this.markRows, this.marks * 2, 0);
      this.markLines = growInt32(this.markLines, this.marks * 2, 0);
    }
    this.markRows[this.marks] = row;
    this.markLines[this.marks] = line;
    this.marks++;
    this.nextLine = line + 1;
  }

  /**
   * The file line (1-based, header on line 1) where data row `row` (0-based) began, when
   * the reader reported lines; else the line it would have in a file without blank lines.
   */
  lineOfRow(row: number): number {
    return lineOfRowByMarks(this.markRows, this.markLines, this.marks, row);
  }

  /**
   * The (row, line) marks behind {@link lineOfRow}, copied: enough to map rows to lines
   * where this set is not at hand (a part of a file read on another thread).
   */
  lineMarks(): { rows: Int32Array; lines: Int32Array } {
    return { rows: this.markRows.slice(0, this.marks), lines: this.markLines.slice(0, this.marks) };
  }

  /** The finished kept columns, in file order. */
  finish(): ColumnData[] {
    const out: ColumnData[] = [];
    const lineOfRow = (row: number): number => this.lineOfRow(row);
    for (const builder of this.builders) if (builder !== null) out.push(builder.finish(lineOfRow));
    return out;
  }
}
