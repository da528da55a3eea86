/**
 * The second part of a CSV file read on its own (by csvPartWorker.ts, on another thread):
 * the records from a byte offset where a record begins to the end of the file, parsed by
 * the upload reader's record parser with the delimiter and column names that the first
 * part's header fixed, into the same kept columns as readEngineData builds.
 *
 * Line numbers here count from the part's first line (line 1); the caller shifts them.
 * Any refusal or any byte the whole-file reader would refuse (a NUL byte, invalid UTF-8)
 * makes the part "unusable": the caller then reads the whole file in one pass, so that the
 * message the analyst sees is exactly the one-pass reader's.
 */
import { closeSync, openSync, readSync } from 'node:fs';
import { isAscii } from 'node:buffer';
import { CsvRecordParser, type CsvSink } from '../extracts/csvRecordParser';
import { storedColumn, type StoredColumn } from '../extracts/engineData';
import { KeptColumns } from './engineInput';

/** The reader's default limits (csvReader.ts), which the part must apply alike. */
const MAX_FIELD_BYTES = 1024 * 1024;
const MAX_COLUMNS = 2000;

/** What the main thread sends: the part's byte range and what the header fixed. */
export interface CsvPartRequest {
  path: string;
  start: number;
  end: number;
  delimiter: number;
  names: string[];
  keep: string[];
}

/** A kept column of the part, or the name of a text column whose dictionary overflowed. */
export type PartColumn = StoredColumn | { name: string; overflowed: true };

/** The part's columns, its record count and its (row, line) marks, lines counted from 1 at the part's start. */
export interface CsvPartResult {
  ok: true;
  recordCount: number;
  columns: PartColumn[];
  markRows: Int32Array;
  markLines: Int32Array;
}

/** The part could not be read as the one-pass reader would; `reason` is for diagnosis only. */
export interface CsvPartUnusable {
  ok: false;
  reason: string;
}

/** The record parser started after the header, with its delimiter and columns already known. */
class CsvBodyParser extends CsvRecordParser {
  constructor(sink: CsvSink, delimiter: number, names: string[]) {
    super(sink, MAX_FIELD_BYTES, MAX_COLUMNS);
    this.delimiter = delimiter;
    this.columnCount = names.length;
    this.headerFields = names.slice();
  }

  push(bytes: Uint8Array): void {
    this.parse(bytes);
  }

  /** Flushes a last record without a line break; returns the records read. */
  finish(): number {
    this.flushEnd();
    return this.recordCount;
  }
}

/**
 * Hands the bytes [start, end) of the file to `each` in chunks of `chunkBytes` (the first
 * of `firstChunkBytes`), read one after another into the same buffer, which is only valid
 * during the call. Throws when the file is shorter than `end`.
 */
export function readChunks(path: string, start: number, end: number, each: (chunk: Uint8Array) => void, chunkBytes = 1 << 20, firstChunkBytes = chunkBytes): void {
  const buffer = Buffer.allocUnsafe(Math.max(chunkBytes, firstChunkBytes));
  const fd = openSync(path, 'r');
  try {
    for (let at = start, want = firstChunkBytes; at < end; want = chunkBytes) {
      const read = readSync(fd, buffer, 0, Math.min(want, end - at), at);
      if (read === 0) throw new Error('the file became shorter while it was read');
      each(buffer.subarray(0, read));
      at += read;
    }
  } finally {
    closeSync(fd);
  }
}

/** Reads and parses the part; never throws (a failure is reported as unusable). */
export function readCsvPart(request: CsvPartRequest): CsvPartResult | CsvPartUnusable {
  try {
    const sink = new KeptColumns(new Set(request.keep), request.end - request.start);
    sink.header(request.names);
    const parser = new CsvBodyParser(sink, request.delimiter, request.names);
    // The checks of the whole-file reader on raw bytes (csvReader.ts): no NUL byte, UTF-8.
    const utf8 = new TextDecoder('utf-8', { fatal: true });
    let pending = false;
    let refused: string | null = null;
    readChunks(request.path, request.start, request.end, (chunk) => {
      if (refused !== null) return;
      if (chunk.indexOf(0) >= 0) refused = 'NUL byte';
      else if (pending || !isAscii(chunk)) {
        try {
          utf8.decode(chunk, { stream: true });
          pending = chunk[chunk.length - 1] >= 0x80;
        } catch {
          refused = 'not UTF-8';
        }
      }
      if (refused === null) parser.push(chunk);
    });
    if (refused === null) {
      try {
        utf8.decode();
      } catch {
        refused = 'not UTF-8';
      }
    }
    if (refused !== null) return { ok: false, reason: refused };
    const recordCount = parser.finish();
    const columnSet = sink.columns!;
    const columns: PartColumn[] = columnSet.finish().map((column) => storedColumn(column) ?? { name: column.name, overflowed: true });
    const marks = columnSet.lineMarks();
    return { ok: true, recordCount, columns, markRows: marks.rows, markLines: marks.lines };
  } catch (error) {
    return { ok: false, reason: (error as Error)?.message ?? String(error) };
  }
}

/** The buffers a result can hand over to another thread without copying. */
export function transferables(result: CsvPartResult): ArrayBuffer[] {
  const buffers = new Set<ArrayBuffer>();
  const add = (array: Float64Array | Int32Array) => {
    if (array.buffer instanceof ArrayBuffer) buffers.add(array.buffer);
  };
  for (const column of result.columns) {
    if ('overflowed' in column) continue;
    add(column.storage === 'numeric' ? column.values : column.codes);
  }
  add(result.markRows);
  add(result.markLines);
  return [...buffers];
}
