/**
 * The engine command's former CSV reader (csv-parse, then typing every column), kept
 * unchanged for the command benchmark's comparison only: nothing else uses it.
 */
import { readFile } from 'node:fs/promises';
import { parse } from 'csv-parse/sync';
import { InvalidDataError } from '@/engine/errors.js';
import type { EngineColumn, EngineData } from '@/engine/types.js';

const NUMBER = /^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/;

/**
 * Reads a CSV with a header row (RFC 4180 quoting) into engine columns. An empty field is
 * a missing value. A column whose non-empty fields all parse as finite decimal numbers is
 * numeric; any other column is categorical with its levels in order of first appearance.
 *
 * @throws InvalidDataError for a malformed file, a blank or duplicated header, or ragged rows.
 */
export function parseCsv(text: string): EngineData {
  let records: string[][];
  try {
    records = parse(text, { bom: true, relax_column_count: false, skip_empty_lines: true }) as string[][];
  } catch (error) {
    throw new InvalidDataError(`The CSV file could not be read: ${(error as Error).message}`);
  }
  if (records.length === 0) throw new InvalidDataError('The CSV file is empty.');
  const header = records[0];
  const seen = new Set<string>();
  header.forEach((name, index) => {
    if (name.trim() === '') throw new InvalidDataError(`Column ${index + 1} of the CSV header has no name.`);
    if (seen.has(name)) throw new InvalidDataError(`The CSV header names the column "${name}" twice.`, { column: name });
    seen.add(name);
  });
  const rowCount = records.length - 1;
  const columns: Record<string, EngineColumn> = {};
  header.forEach((name, index) => {
    let numeric = true;
    for (let row = 1; row <= rowCount; row++) {
      const field = records[row][index];
      if (field !== '' && !NUMBER.test(field.trim())) {
        numeric = false;
        break;
      }
    }
    const missing = new Uint8Array(rowCount);
    if (numeric) {
      const values = new Float64Array(rowCount);
      for (let row = 0; row < rowCount; row++) {
        const field = records[row + 1][index];
        if (field === '') {
          missing[row] = 1;
          values[row] = Number.NaN;
        } else values[row] = Number(field.trim());
      }
      columns[name] = { kind: 'numeric', values, missing };
    } else {
      const levels: string[] = [];
      const lookup = new Map<string, number>();
      const codes = new Int32Array(rowCount);
      for (let row = 0; row < rowCount; row++) {
        const field = records[row + 1][index];
        if (field === '') {
          missing[row] = 1;
          codes[row] = -1;
          continue;
        }
        let code = lookup.get(field);
        if (code === undefined) {
          code = levels.length;
          levels.push(field);
          lookup.set(field, code);
        }
        codes[row] = code;
      }
      columns[name] = { kind: 'categorical', codes, levels, missing };
    }
  });
  return { rowCount, columns };
}

/** Reads and parses a CSV file. */
export async function readCsvFile(path: string): Promise<EngineData> {
  return parseCsv(await readFile(path, 'utf8'));
}
