/**
 * Read-only scans of a column for missing values, used by the analysis frame to find the
 * complete-case rows (and to skip copying when there are none).
 */
import type { EngineColumn } from '../types.js';

/**
 * Whether a column has a missing value (missing mask 1, NaN, or a categorical code outside
 * its levels) and, for a numeric column, whether every value is finite, which spares the
 * continuous-variable check a second pass. Numbers are tested without a branch per row.
 */
export function scanColumn(column: EngineColumn, rowCount: number): { missing: boolean; finite: boolean } {
  if (column.missing !== undefined) {
    const mask = column.missing;
    for (let row = 0; row < rowCount; row++) if (mask[row] === 1) return { missing: true, finite: false };
  }
  if (column.kind === 'numeric') {
    const values = column.values;
    let nonFinite = 0;
    for (let row = 0; row < rowCount; row++) {
      const value = values[row];
      nonFinite |= +(value - value !== 0);
    }
    if (nonFinite === 0) return { missing: false, finite: true };
    for (let row = 0; row < rowCount; row++) if (values[row] !== values[row]) return { missing: true, finite: false };
    return { missing: false, finite: false };
  }
  const codes = column.codes;
  const levelCount = column.levels.length;
  for (let row = 0; row < rowCount; row++) {
    const code = codes[row];
    if (code < 0 || code >= levelCount) return { missing: true, finite: false };
  }
  return { missing: false, finite: false };
}

/**
 * Sets `missingRow[row]` to 1 for every row missing in the column (see scanColumn) and
 * returns how many rows are missing in this column.
 */
export function markMissingRows(column: EngineColumn, rowCount: number, missingRow: Uint8Array): number {
  const mask = column.missing;
  let count = 0;
  if (column.kind === 'numeric') {
    const values = column.values;
    for (let row = 0; row < rowCount; row++) {
      if (values[row] !== values[row] || (mask !== undefined && mask[row] === 1)) {
        missingRow[row] = 1;
        count++;
      }
    }
  } else {
    const codes = column.codes;
    const levelCount = column.levels.length;
    for (let row = 0; row < rowCount; row++) {
      const code = codes[row];
      if (code < 0 || code >= levelCount || (mask !== undefined && mask[row] === 1)) {
        missingRow[row] = 1;
        count++;
      }
    }
  }
  return count;
}
