/**
 * Reads a CSV file into the engine's data through the same streaming reader and column
 * accumulator as uploads (extracts/csvReader.ts, extracts/columnAccumulator.ts) and the same
 * stored-column adapter as analysis runs (extracts/engineData.ts), so a file gives the
 * engine command exactly the data an upload of that file gives a run.
 *
 * Only the columns the specification uses are kept; the others are skipped as they pass.
 */
import { createReadStream } from 'node:fs';
import { stat } from 'node:fs/promises';
import type { EngineData } from '@/engine';
import { ColumnSet } from '../extracts/columnAccumulator';
import { CsvChunkReader, readCsv, type CsvSink } from '../extracts/csvReader';
import { storedColumn, toEngineData, type StoredColumn } from '../extracts/engineData';

/** The data file cannot be used: a refusal of the reader, or a column it cannot keep. */
export class EngineInputError extends Error {
  override readonly name = 'EngineInputError';
  readonly column?: string;

  constructor(message: string, column?: string) {
    super(message);
    if (column !== undefined) this.column = column;
  }
}

/** Hands the header to a column set that drops every column outside `keep`. */
export class KeptColumns implements CsvSink {
  columns: ColumnSet | null = null;

  constructor(
    private readonly keep: ReadonlySet<string>,
    private readonly expectedBytes: number,
  ) {}

  header(names: readonly string[]): void {
    this.columns = new ColumnSet({ dropColumns: names.filter((name) => !this.keep.has(name)), expectedBytes: this.expectedBytes });
    this.columns.header(names);
  }

  field(column: number, bytes: Uint8Array, start: number, end: number): void {
    this.columns!.field(column, bytes, start, end);
  }

  endRecord(line?: number): void {
    this.columns!.endRecord(line);
  }
}

/**
 * Reads `path` and returns the engine data for the columns in `roles` (a column the file
 * lacks is left out; the engine then names it). Throws the reader's ExtractRefusalError
 * for a file uploads refuse (its message names the line), EngineInputError for a used text
 * column with more distinct values than a column may keep, and the file system's error for
 * a file that cannot be opened.
 */
export async function readEngineData(path: string, roles: Record<string, 'categorical' | 'continuous'>): Promise<EngineData> {
  const { size } = await stat(path);
  const sink = new KeptColumns(new Set(Object.keys(roles)), size);
  // The engine has no use for the content hash (uploads keep theirs).
  const summary = await readCsv(createReadStream(path, { highWaterMark: 1 << 20 }), sink, { hash: false });
  const stored: StoredColumn[] = [];
  for (const column of sink.columns!.finish()) {
    const kept = storedColumn(column);
    if (kept === null) {
      throw new EngineInputError(`The column "${column.name}" has more distinct values than a column may keep, too many to use as a category.`, column.name);
    }
    stored.push(kept);
  }
  // Errors about a value then name its line in the file, as an upload's do.
  const columns = sink.columns!;
  return { ...toEngineData(summary.recordCount, stored, roles), lineOfRow: (row) => columns.lineOfRow(row) };
}

/**
 * The engine data of a whole CSV held in memory, read as an upload is, every column kept:
 * number columns as numeric, text columns as categorical (the engine codes a numeric column
 * used as a category itself). For reference data and tests; throws like readEngineData.
 */
export function engineDataOfCsv(text: string | Uint8Array): EngineData {
  const columns = new ColumnSet();
  const reader = new CsvChunkReader(columns);
  reader.push(typeof text === 'string' ? Buffer.from(text, 'utf8') : text);
  const { recordCount } = reader.finish();
  const stored: StoredColumn[] = [];
  const roles: Record<string, 'categorical' | 'continuous'> = {};
  for (const column of columns.finish()) {
    const kept = storedColumn(column);
    if (kept === null) throw new EngineInputError(`The column "${column.name}" has too many distinct values to keep.`, column.name);
    stored.push(kept);
    roles[kept.name] = kept.storage === 'numeric' ? 'continuous' : 'categorical';
  }
  return toEngineData(recordCount, stored, roles);
}
