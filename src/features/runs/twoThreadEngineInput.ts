/**
 * readEngineData on two threads, for the engine command on a large file: the file is cut
 * in two at the first line break after 55% of it; this thread reads the first part with
 * the upload reader (header, delimiter, checks, records) while the first helper thread of
 * the engine's pass pool (csvPartWorker.ts) parses the second part with the same record
 * parser and column accumulator before it serves the fit's passes; the two parts' columns
 * are then joined.
 *
 * The result is the one-pass reader's, value for value: numbers are concatenated; text
 * levels are the union of both parts' levels, sorted the same way, and a column that is
 * numbers in one part and text in the other takes the numbers as levels in the form the
 * one-pass reader gives them (String(value)); a column whose levels together pass the
 * cap is refused as before. Whenever the cut is not a record boundary (it falls inside a
 * quoted field) or either part meets anything the reader refuses, the whole file is read
 * again in one pass by readEngineData, so every message is exactly the one-pass reader's.
 */
import { closeSync, openSync, readSync } from 'node:fs';
import { stat } from 'node:fs/promises';
import { MessageChannel } from 'node:worker_threads';
import type { EngineData } from '@/engine';
import { passPool } from '@/engine/threads/passPool';
import { launchFor } from '@/engine/threads/workerLaunch';
import { DEFAULT_MAX_LEVELS, lineOfRowByMarks } from '../extracts/columnAccumulator';
import { CsvChunkReader, DEFAULT_MAX_BYTES, type CsvSink } from '../extracts/csvReader';
import { storedColumn, toEngineData, type StoredColumn } from '../extracts/engineData';
import { readChunks, type CsvPartRequest, type CsvPartResult, type CsvPartUnusable, type PartColumn } from './csvPart';
import { EngineInputError, KeptColumns, readEngineData } from './engineInput';

/**
 * Files from this size are read on two threads (below it a thread's start costs more than it
 * saves); they also hold enough rows for the engine to fit on several threads.
 */
export const TWO_THREAD_MIN_BYTES = 4_000_000;

const LF = 10;

/** The share of the file read by the calling thread (see readInTwoParts). */
const FIRST_PART_SHARE = 0.55;

/** The upload reader, with the delimiter it detected made visible. */
class FirstPartReader extends CsvChunkReader {
  get delimiterByte(): number {
    return this.delimiter;
  }
}

/** Keeps the header's names for the second part. */
class FirstPartSink extends KeptColumns implements CsvSink {
  names: string[] | null = null;

  override header(names: readonly string[]): void {
    this.names = names.slice();
    super.header(names);
  }
}

/** The offset just after the first line break at or after `from`, within 1 MiB; -1 when there is none there. */
function lineStartAfter(path: string, from: number, size: number): number {
  const window = Buffer.allocUnsafe(Math.min(1 << 20, size - from));
  const fd = openSync(path, 'r');
  try {
    const read = readSync(fd, window, 0, window.length, from);
    const at = window.subarray(0, read).indexOf(LF);
    return at < 0 ? -1 : from + at + 1;
  } finally {
    closeSync(fd);
  }
}

/**
 * Starts the pass pool (`helpers` helper threads) with its first helper reading the part
 * first (csvPartWorker.ts); the part's result arrives on a port of its own.
 */
function startPartReader(request: CsvPartRequest, helpers: number): Promise<CsvPartResult | CsvPartUnusable> {
  const channel = new MessageChannel();
  const result = new Promise<CsvPartResult | CsvPartUnusable>((resolve) => {
    channel.port1.once('message', (message: CsvPartResult | CsvPartUnusable) => resolve(message));
    // The port closes without a message when the thread stops first.
    channel.port1.once('close', () => resolve({ ok: false, reason: 'the helper thread stopped without an answer' }));
  });
  const launch = launchFor(new URL('./csvPartWorker.js', import.meta.url), import.meta.url);
  const pool = passPool(helpers, { launch, workerData: { part: request, partPort: channel.port2 }, transferList: [channel.port2] });
  pool.catch(() => channel.port1.close());
  return result.finally(() => channel.port1.close());
}

type TextParts = { levels: string[]; codes: Int32Array };

/** A part's column as levels and codes; numbers become levels as String(value), as the one-pass reader makes them. */
function asText(column: StoredColumn): TextParts {
  if (column.storage === 'text') return { levels: column.levels, codes: column.codes };
  const index = new Map<string, number>();
  const codes = new Int32Array(column.values.length);
  for (let row = 0; row < codes.length; row++) {
    const v = column.values[row];
    if (v !== v) {
      codes[row] = -1;
      continue;
    }
    const key = String(v);
    let code = index.get(key);
    if (code === undefined) {
      code = index.size;
      index.set(key, code);
    }
    codes[row] = code;
  }
  return { levels: [...index.keys()], codes };
}

/**
 * `part` extended to `length` elements over its own buffer when the buffer has the room
 * (the first part's columns reserve room for the whole file), else a new array holding it.
 */
function extended<T extends Float64Array | Int32Array>(part: T, length: number, make: (buffer: ArrayBufferLike, offset: number, length: number) => T, fresh: (length: number) => T): T {
  if (part.byteOffset + length * part.BYTES_PER_ELEMENT <= part.buffer.byteLength) return make(part.buffer, part.byteOffset, length);
  const out = fresh(length);
  out.set(part);
  return out;
}

/** The two parts of one column joined, or null when together they pass the level cap. */
export function joinColumns(first: PartColumn, second: PartColumn): StoredColumn | null {
  if ('overflowed' in first || 'overflowed' in second) return null;
  const name = first.name;
  if (first.storage === 'numeric' && second.storage === 'numeric') {
    const length = first.values.length + second.values.length;
    const values = extended(first.values, length, (b, o, n) => new Float64Array(b, o, n), (n) => new Float64Array(n));
    values.set(second.values, first.values.length);
    return { name, storage: 'numeric', values };
  }
  const a = asText(first);
  const b = asText(second);
  const union = new Set([...a.levels, ...b.levels]);
  if (union.size > DEFAULT_MAX_LEVELS) return null;
  const levels = [...union].sort((x, y) => (x < y ? -1 : x > y ? 1 : 0));
  const position = new Map(levels.map((level, code) => [level, code]));
  // The first part's codes are rewritten in place, before the second's are placed after them.
  const length = a.codes.length + b.codes.length;
  const codes = extended(a.codes, length, (buffer, offset, n) => new Int32Array(buffer, offset, n), (n) => new Int32Array(n));
  let at = 0;
  for (const part of [a, b]) {
    const map = Int32Array.from(part.levels, (level) => position.get(level)!);
    for (let row = 0; row < part.codes.length; row++, at++) {
      const code = part.codes[row];
      codes[at] = code >= 0 ? map[code] : code;
    }
  }
  return { name, storage: 'text', codes, levels };
}

/**
 * Reads `path` in two parts, the second on the first of `helpers` pass pool threads, which
 * this starts; null when the file must be read again in one pass.
 */
export async function readInTwoParts(path: string, size: number, roles: Record<string, 'categorical' | 'continuous'>, helpers = 1): Promise<EngineData | null> {
  // The helper thread starts a little after this one and first boots, so it gets a little
  // less of the file: the two parts are then ready at about the same time.
  const middle = Math.floor(size * FIRST_PART_SHARE);
  const split = lineStartAfter(path, middle, size);
  if (split < 0 || split >= size) return null;
  const keep = Object.keys(roles);
  // Sized for the whole file, so that the second part's rows fit after the first's.
  const sink = new FirstPartSink(new Set(keep), size);
  // The command has no use for the content hash (uploads keep theirs).
  const reader = new FirstPartReader(sink, { hash: false });
  let second = null as Promise<CsvPartResult | CsvPartUnusable> | null;
  let summary;
  try {
    // A small first chunk fixes the header soon, so that the helper starts early.
    readChunks(path, 0, split, (chunk) => {
      reader.push(chunk);
      if (second === null && sink.names !== null) {
        second = startPartReader({ path, start: split, end: size, delimiter: reader.delimiterByte, names: sink.names, keep }, helpers);
      }
    }, 1 << 20, 1 << 16);
    summary = reader.finish();
  } catch {
    return null;
  }
  if (second === null) return null;
  // The first part's columns are finished while the helper may still be parsing.
  const firstColumns = sink.columns!;
  const first = firstColumns.finish();
  const part = await second;
  if (!part.ok) return null;
  const stored: StoredColumn[] = [];
  for (let k = 0; k < first.length; k++) {
    const joined = joinColumns(storedColumn(first[k]) ?? { name: first[k].name, overflowed: true }, part.columns[k]);
    if (joined === null) {
      const name = first[k].name;
      throw new EngineInputError(`The column "${name}" has more distinct values than a column may keep, too many to use as a category.`, name);
    }
    stored.push(joined);
  }
  const firstRows = summary.recordCount;
  const linesBefore = summary.lineCount;
  const lineOfRow = (row: number): number =>
    row < firstRows
      ? firstColumns.lineOfRow(row)
      : linesBefore + lineOfRowByMarks(part.markRows, part.markLines, part.markRows.length, row - firstRows);
  return { ...toEngineData(firstRows + part.recordCount, stored, roles), lineOfRow };
}

/**
 * The engine data of `path` for the columns in `roles`, as readEngineData gives them
 * (same values, same refusals and messages), read on two threads when the file is at
 * least `minimumBytes` long. Either way the engine's pass pool of `helpers` threads is
 * started (its first helper reads the second part), so that it is ready for the fit.
 */
export async function readEngineDataOnTwoThreads(
  path: string,
  roles: Record<string, 'categorical' | 'continuous'>,
  minimumBytes = TWO_THREAD_MIN_BYTES,
  helpers = 1,
): Promise<EngineData> {
  const { size } = await stat(path);
  if (size >= minimumBytes && size <= DEFAULT_MAX_BYTES) {
    const data = await readInTwoParts(path, size, roles, helpers);
    if (data !== null) return data;
  }
  passPool(helpers).catch(() => undefined);
  return readEngineData(path, roles);
}
