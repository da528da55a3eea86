/**
 * Checks of the analysis frame that concern missing values and text where numbers are
 * needed: token levels read as missing, suspect "not known" codes, and messages that name
 * the value, the column and where it first occurs.
 */
import { ColumnNotFoundError, ColumnTypeMismatchError, InvalidDataError } from '../errors.js';
import type { CategoricalColumn, EngineColumn, EngineData, EngineWarning } from '../types.js';
import { isMissingToken, suspectMissingLevels } from './missingValues.js';

/**
 * A categorical column whose levels include missing-value tokens ("NA", ".", "null" ...)
 * gets them removed: their rows become missing (code -1), the other levels keep their
 * order. A column without such a level is returned as it is, without a copy.
 */
export function withoutMissingTokens(column: CategoricalColumn): CategoricalColumn {
  if (!column.levels.some(isMissingToken)) return column;
  const levels: string[] = [];
  const map = column.levels.map((level) => (isMissingToken(level) ? -1 : levels.push(level) - 1));
  const codes = new Int32Array(column.codes.length);
  const levelCount = map.length;
  for (let row = 0; row < codes.length; row++) {
    const code = column.codes[row];
    codes[row] = code >= 0 && code < levelCount ? map[code] : -1;
  }
  return { kind: 'categorical', codes, levels, ...(column.missing !== undefined ? { missing: column.missing } : {}) };
}

/** Where a data row came from, for messages: its line in the file when known. */
export function rowPlace(data: EngineData, row: number): string {
  const source = data.sourceRowOf !== undefined ? data.sourceRowOf(row) : row;
  return data.lineOfRow !== undefined ? `line ${data.lineOfRow(row)}` : `data row ${source + 1}`;
}

/**
 * Refuses a text column where a number is needed, naming the first text value, its place
 * and the column. `use` completes "must be numeric ...".
 */
export function refuseText(data: EngineData, column: EngineColumn, name: string, use: string): never {
  if (column.kind === 'categorical') {
    const isNumber = column.levels.map((level) => /^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/.test(level.trim()));
    for (let row = 0; row < column.codes.length; row++) {
      const code = column.codes[row];
      if (code >= 0 && code < column.levels.length && !isNumber[code] && column.missing?.[row] !== 1) {
        const value = column.levels[code];
        throw new ColumnTypeMismatchError(
          name,
          `numeric ${use}, but it holds the text "${value}" (first on ${rowPlace(data, row)}). Correct that value, leave it empty, or declare it a missing-value code when confirming the extract`,
          value,
        );
      }
    }
  }
  throw new ColumnTypeMismatchError(name, `numeric ${use}`);
}

/** Warns about levels that look like undeclared missing-value codes (see missingValues.ts). */
export function warnSuspectLevels(name: string, levels: readonly string[], warnings: EngineWarning[]): void {
  for (const level of suspectMissingLevels(levels)) {
    warnings.push({
      code: 'POSSIBLE_MISSING_CODE',
      message:
        `The level "${level}" of "${name}" looks like a code for a missing value, but it was analysed as a level of its own. ` +
        'If it means "not known", declare it a missing-value code for this column when confirming the extract, and run the analysis on that version.',
      column: name,
      level,
    });
  }
}

/** The ROWS_DROPPED warning, with the rows missing per column, when any row was left out. */
export function warnDropped(rowCount: number, kept: number, missingByColumn: { column: string; rows: number }[], warnings: EngineWarning[]): void {
  if (kept === rowCount) return;
  const byColumn = missingByColumn.map((entry) => `"${entry.column}" ${entry.rows}`).join(', ');
  warnings.push({
    code: 'ROWS_DROPPED',
    message:
      `${rowCount - kept} of ${rowCount} rows have a missing value in a column the analysis uses and were left out ` +
      `(rows missing per column: ${byColumn}; a row can be missing in more than one).`,
  });
}

/** A column of the data by name, checked for length, with missing-value token levels read as missing. */
export function getColumn(data: EngineData, name: string): EngineColumn {
  const column = Object.prototype.hasOwnProperty.call(data.columns, name) ? data.columns[name] : undefined;
  if (column === undefined) throw new ColumnNotFoundError(name);
  const length = column.kind === 'numeric' ? column.values.length : column.codes.length;
  if (length !== data.rowCount) {
    throw new InvalidDataError(`The column "${name}" has ${length} values but the data have ${data.rowCount} rows.`, { column: name });
  }
  if (column.missing !== undefined && column.missing.length !== data.rowCount) {
    throw new InvalidDataError(`The missing-value mask of "${name}" has the wrong length.`, { column: name });
  }
  return column.kind === 'categorical' ? withoutMissingTokens(column) : column;
}
