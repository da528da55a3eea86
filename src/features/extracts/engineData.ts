/**
 * Stored extract columns as the engine takes them. Pure: shared by analysis runs (columns
 * loaded from the database) and the engine command (columns read from a CSV file), so the
 * same file gives the engine the same data on both paths.
 */
import type { EngineColumn, EngineData } from '../../engine';
import type { ColumnData } from './columnAccumulator';

/** A column as stored: numbers (NaN where missing) or level codes (-1 where missing). */
export type StoredColumn =
  | { name: string; storage: 'numeric'; values: Float64Array }
  | { name: string; storage: 'text'; codes: Int32Array; levels: string[] };

/**
 * The stored form of a finished column, as the upload path writes it (see columnStore.ts:
 * numbers as read, text as sorted levels and codes). Returns null for a text column whose
 * dictionary overflowed (the upload path refuses such a column).
 */
export function storedColumn(column: ColumnData): StoredColumn | null {
  if (column.kind === 'numeric') return { name: column.name, storage: 'numeric', values: column.values };
  if (column.levelsOverflowed) return null;
  return { name: column.name, storage: 'text', codes: column.codes, levels: column.levels };
}

/** Engine-ready data for an analysis: categorical roles become codes, whatever the storage. */
export function toEngineData(
  rowCount: number,
  columns: StoredColumn[],
  roles: Record<string, 'categorical' | 'continuous'>,
): EngineData {
  const out: Record<string, EngineColumn> = {};
  for (const column of columns) {
    const role = roles[column.name];
    if (!role) continue;
    if (column.storage === 'text') {
      out[column.name] = { kind: 'categorical', codes: column.codes, levels: column.levels };
      continue;
    }
    if (role === 'continuous') {
      out[column.name] = { kind: 'numeric', values: column.values };
      continue;
    }
    // A numeric column used as a category: its distinct values, in numeric order, are the levels.
    const values = column.values;
    const seen = new Map<number, number>();
    for (let i = 0; i < rowCount; i += 1) {
      const v = values[i];
      if (v === v && !seen.has(v)) seen.set(v, 0);
    }
    const distinct = [...seen.keys()].sort((a, b) => a - b);
    distinct.forEach((v, i) => seen.set(v, i));
    const codes = new Int32Array(rowCount);
    for (let i = 0; i < rowCount; i += 1) {
      const v = values[i];
      codes[i] = v === v ? seen.get(v)! : -1;
    }
    out[column.name] = { kind: 'categorical', codes, levels: distinct.map((v) => String(v)) };
  }
  return { rowCount, columns: out };
}
