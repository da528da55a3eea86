/**
 * Stored extract columns as the engine takes them. Pure: shared by analysis runs (columns
 * loaded from the database) and the engine command (columns read from a CSV file), so the
 * same file gives the engine the same data on both paths. Categorical roles become codes
 * whatever the storage; the analyst's declared missing-value codes (see the dictionary)
 * make those values missing, and the shared tokens are never levels (the engine also
 * drops token levels of its own accord).
 */
import type { EngineColumn, EngineData } from '@/engine';
import { isMissingToken } from '@/engine/design/missingValues';
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

/** How a declared code is compared with a value: trimmed and in lower case. */
export function missingCodeKey(value: string): string {
  return value.trim().toLowerCase();
}

/** A column's levels without the shared tokens and its declared missing-value codes. */
export function levelsLeftIn(levels: readonly string[], declared: readonly string[] = []): string[] {
  const keys = new Set(declared.map(missingCodeKey));
  const numbers = declaredNumbers(declared);
  return levels.filter((level) => !isMissingToken(level) && !keys.has(missingCodeKey(level)) && !(level.trim() !== '' && numbers.has(Number(level))));
}

/** The numbers among declared codes (for numeric storage), compared as numbers. */
function declaredNumbers(codes: readonly string[]): Set<number> {
  const out = new Set<number>();
  for (const code of codes) {
    const text = code.trim();
    if (text !== '' && Number.isFinite(Number(text))) out.add(Number(text));
  }
  return out;
}

/** A text column without its token levels and declared codes: their rows get code -1. */
function textColumn(column: Extract<StoredColumn, { storage: 'text' }>, declared: readonly string[]): EngineColumn {
  const keys = new Set(declared.map(missingCodeKey));
  const dropped = (level: string) => isMissingToken(level) || keys.has(missingCodeKey(level));
  if (!column.levels.some(dropped)) return { kind: 'categorical', codes: column.codes, levels: column.levels };
  const levels: string[] = [];
  const map = column.levels.map((level) => (dropped(level) ? -1 : levels.push(level) - 1));
  const codes = new Int32Array(column.codes.length);
  for (let row = 0; row < codes.length; row += 1) {
    const code = column.codes[row];
    codes[row] = code >= 0 && code < map.length ? map[code] : -1;
  }
  return { kind: 'categorical', codes, levels };
}

/**
 * Engine-ready data for an analysis: categorical roles become codes, whatever the storage.
 * `missingValues` holds each column's declared missing-value codes (from the confirmed
 * dictionary). Stored arrays are never changed: a column with a declared code is copied.
 */
export function toEngineData(
  rowCount: number,
  columns: StoredColumn[],
  roles: Record<string, 'categorical' | 'continuous'>,
  missingValues: Readonly<Record<string, readonly string[]>> = {},
): EngineData {
  const out: Record<string, EngineColumn> = {};
  for (const column of columns) {
    const role = roles[column.name];
    if (!role) continue;
    const declared = Object.hasOwn(missingValues, column.name) ? missingValues[column.name] : [];
    if (column.storage === 'text') {
      out[column.name] = textColumn(column, declared);
      continue;
    }
    let values = column.values;
    const numbers = declaredNumbers(declared);
    if (numbers.size > 0) {
      values = Float64Array.from(column.values, (v) => (numbers.has(v) ? Number.NaN : v));
    }
    if (role === 'continuous') {
      out[column.name] = { kind: 'numeric', values };
      continue;
    }
    out[column.name] = numericAsCategorical(values, rowCount);
  }
  return { rowCount, columns: out };
}

/** Small whole numbers (0 to 1,023) are looked up in a table rather than a Map: a speed-up only. */
const SMALL_VALUES = 1024;

/** A numeric column used as a category: its distinct values, in numeric order, are the levels. */
function numericAsCategorical(values: Float64Array, rowCount: number): EngineColumn {
  const seen = new Map<number, number>();
  const smallSeen = new Uint8Array(SMALL_VALUES);
  for (let i = 0; i < rowCount; i += 1) {
    const v = values[i];
    if (v >= 0 && v < SMALL_VALUES && (v | 0) === v) smallSeen[v] = 1;
    else if (v === v && !seen.has(v)) seen.set(v, 0);
  }
  // -0 falls in the table as 0, as the Map would take it.
  for (let v = 0; v < SMALL_VALUES; v += 1) if (smallSeen[v] === 1) seen.set(v, 0);
  const distinct = [...seen.keys()].sort((a, b) => a - b);
  distinct.forEach((v, i) => seen.set(v, i));
  const smallCode = new Int32Array(SMALL_VALUES).fill(-1);
  for (let v = 0; v < SMALL_VALUES; v += 1) if (smallSeen[v] === 1) smallCode[v] = seen.get(v)!;
  const codes = new Int32Array(rowCount);
  for (let i = 0; i < rowCount; i += 1) {
    const v = values[i];
    codes[i] = v >= 0 && v < SMALL_VALUES && (v | 0) === v ? smallCode[v] : v === v ? (seen.get(v) ?? -1) : -1;
  }
  return { kind: 'categorical', codes, levels: distinct.map((v) => String(v)) };
}
