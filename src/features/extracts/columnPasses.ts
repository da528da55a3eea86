/**
 * Reading a received file's columns a few at a time, so that the server never holds every
 * column of a large upload at once.
 *
 * While an upload arrives it is checked (size, encoding, CSV shape), hashed and written to
 * its partial file, but a large one keeps no columns (only those it asks to keep, which the
 * keep check needs before the answer). The columns are then read again from that file in
 * groups whose typed arrays fit {@link COLUMN_MEMORY_BUDGET}: one column at a time for a
 * 200 MB file of millions of rows, all of them in one pass for a file of a few megabytes.
 * Each group is screened, profiled and staged for storage before the next is read.
 */
import { createReadStream } from 'node:fs';
import type { ColumnData } from './columnAccumulator';
import { readExtractColumns, type ReadExtract, type ReviewedExtract } from './extracts';

/** Bytes of column arrays one pass may hold (see {@link planColumnGroups}). */
export const COLUMN_MEMORY_BUDGET = 64 * 1024 * 1024;

/**
 * Uploads up to this size (when announced by Content-Length) keep every column while they
 * arrive, as a single pass: every field takes at least 2 bytes, so their columns cannot
 * exceed about 6 bytes per file byte (8-byte numbers, 4-byte codes and a missing bit).
 */
export const ONE_PASS_BYTES = 12 * 1024 * 1024;

/**
 * Most bytes one row of a column can take while it is built: a Float64 value, an Int32
 * code (a column holding numbers and text has both) and one bit of the missing bitmap.
 */
const BYTES_PER_ROW = 8 + 4 + 1 / 8;

/**
 * Splits the file's kept columns (header positions, file order) into consecutive groups
 * whose arrays fit `budget` for `rows` rows; a column larger than the budget alone is a
 * group of its own.
 */
export function planColumnGroups(positions: readonly number[], rows: number, budget = COLUMN_MEMORY_BUDGET): number[][] {
  const perGroup = Math.max(1, Math.floor(budget / Math.max(1, rows * BYTES_PER_ROW)));
  const groups: number[][] = [];
  for (let i = 0; i < positions.length; i += perGroup) groups.push(positions.slice(i, i + perGroup));
  return groups;
}

/** The chunks of a file on disk, 1 MiB at a time. */
export function fileChunks(file: string): AsyncIterable<Uint8Array> {
  return createReadStream(file, { highWaterMark: 1 << 20 });
}

/** Options of a second read: those of the first (drop list, tokens, decimal separator, size limit). */
export interface RereadOptions {
  dropColumns?: readonly string[];
  maxBytes?: number;
  budget?: number;
}

/** Whether the first read built every column that was not dropped. */
export function holdsEveryColumn(read: ReadExtract): boolean {
  return read.columns.length + read.droppedColumns.length === read.header.length;
}

/**
 * Reads the named columns (header positions) of the stored file again. The file must be
 * the one the first read saw: a different SHA-256 is an error (nothing is then stored).
 */
export async function rereadColumns(file: string, read: ReadExtract, positions: ReadonlySet<number>, options: RereadOptions): Promise<ColumnData[]> {
  const again = await readExtractColumns(fileChunks(file), {
    dropColumns: options.dropColumns,
    maxBytes: options.maxBytes,
    expectedRows: read.read.recordCount,
    onlyColumns: (_name, index) => positions.has(index),
  });
  if (again.read.sha256 !== read.read.sha256) throw new Error('The partial upload file changed between two reads.');
  return again.columns;
}

/**
 * The kept columns of an upload in groups, file order: the first read's columns as they
 * are when it built all of them (a small file), otherwise read again from `file` group by
 * group (the first read's columns are reused where they exist). `onGroup` is told the
 * share done so far.
 */
export async function* columnGroups(
  file: string,
  read: ReadExtract,
  options: RereadOptions & { onGroup?: (done: number, total: number) => void },
): AsyncGenerator<ColumnData[]> {
  if (holdsEveryColumn(read)) {
    options.onGroup?.(1, 1);
    yield read.columns;
    return;
  }
  const dropped = new Set(read.droppedColumns);
  const positions = read.header.map((name, index) => (dropped.has(name) ? -1 : index)).filter((index) => index >= 0);
  const held = new Map(read.columns.map((column) => [column.index, column]));
  const groups = planColumnGroups(positions, read.read.recordCount, options.budget);
  for (const [number, group] of groups.entries()) {
    const missing = new Set(group.filter((index) => !held.has(index)));
    const fresh = missing.size > 0 ? await rereadColumns(file, read, missing, options) : [];
    const byIndex = new Map(fresh.map((column) => [column.index, column]));
    options.onGroup?.(number + 1, groups.length);
    yield group.map((index) => held.get(index) ?? byIndex.get(index)).filter((column): column is ColumnData => column !== undefined);
  }
}

/** What the screen said of every column, merged group by group (file order). */
export function mergeReviews(reviews: readonly ReviewedExtract[], keep: readonly string[]): ReviewedExtract {
  const findings = reviews.flatMap((r) => r.findings);
  // A kept name counts as flagged when any group flagged it.
  const keptButNotFlagged = keep.filter((name) => reviews.every((r) => r.keptButNotFlagged.includes(name)));
  const refusals = reviews.flatMap((r) => r.refusals);
  return {
    profile: reviews.flatMap((r) => r.profile), findings, refusals, refused: findings.length > 0,
    kept: reviews.flatMap((r) => r.kept), keptButNotFlagged,
  };
}
