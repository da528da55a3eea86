/**
 * Storage format of a finished column, for one PostgreSQL `bytea` value per array.
 *
 * Format "crossgrain-column/1":
 * - numeric columns: `values` is rowCount IEEE-754 doubles, little-endian, NaN where missing;
 * - text columns: `values` is rowCount signed 32-bit integers, little-endian, each a
 *   0-based index into `levels` (stored beside it, e.g. as `text[]` or JSON), -1 where missing;
 * - both: `missing` is a bitmap of ceil(rowCount / 8) bytes, bit (i & 7) of byte (i >> 3)
 *   set when row i is missing (the least significant bit is row 0 of the byte).
 *
 * On a little-endian machine encoding is zero-copy (the Buffers view the column's own
 * memory) and decoding is zero-copy when the Buffer is 8-byte (or 4-byte) aligned, one copy
 * otherwise; a big-endian machine swaps bytes in one copy each way.
 */
import { endianness } from 'node:os';
import type { ColumnData } from './columnAccumulator';

/** Name and version of the layout, stored with every column. */
export const COLUMN_FORMAT = 'crossgrain-column/1';

/** One column ready for INSERT: two bytea values and, for text columns, the level list. */
export interface EncodedColumn {
  format: typeof COLUMN_FORMAT;
  name: string;
  /** 0-based position in the uploaded file's header. */
  position: number;
  storage: 'numeric' | 'text';
  rowCount: number;
  missingCount: number;
  /** Float64 LE values (numeric) or Int32 LE codes (text). */
  values: Buffer;
  /** Missing bitmap. */
  missing: Buffer;
  /** Levels of a text column in code order; null for numeric columns. */
  levels: string[] | null;
}

const LITTLE_ENDIAN = endianness() === 'LE';

function viewAsBuffer(array: Float64Array | Int32Array | Uint8Array): Buffer {
  return Buffer.from(array.buffer, array.byteOffset, array.byteLength);
}

function swapped(bytes: Uint8Array, width: 4 | 8): Buffer {
  const out = Buffer.allocUnsafe(bytes.length);
  for (let i = 0; i < bytes.length; i += width) {
    for (let k = 0; k < width; k++) out[i + k] = bytes[i + width - 1 - k];
  }
  return out;
}

/**
 * Encodes a finished column. Throws for a text column whose dictionary overflowed (such a
 * column is refused by the screen and has no complete level list).
 */
export function encodeColumn(column: ColumnData): EncodedColumn {
  const missing = viewAsBuffer(column.missing);
  if (column.kind === 'numeric') {
    const bytes = viewAsBuffer(column.values);
    return {
      format: COLUMN_FORMAT,
      name: column.name,
      position: column.index,
      storage: 'numeric',
      rowCount: column.rowCount,
      missingCount: column.missingCount,
      values: LITTLE_ENDIAN ? bytes : swapped(bytes, 8),
      missing,
      levels: null,
    };
  }
  if (column.levelsOverflowed) {
    throw new Error(`encodeColumn: column "${column.name}" has more distinct values than its level cap and cannot be stored`);
  }
  const bytes = viewAsBuffer(column.codes);
  return {
    format: COLUMN_FORMAT,
    name: column.name,
    position: column.index,
    storage: 'text',
    rowCount: column.rowCount,
    missingCount: column.missingCount,
    values: LITTLE_ENDIAN ? bytes : swapped(bytes, 4),
    missing,
    levels: column.levels.slice(),
  };
}

function checkLength(bytes: Uint8Array, rowCount: number, width: number, what: string): void {
  if (!Number.isInteger(rowCount) || rowCount < 0) throw new RangeError(`${what}: rowCount must be a non-negative integer`);
  if (bytes.byteLength !== rowCount * width) {
    throw new RangeError(`${what}: expected ${rowCount * width} bytes for ${rowCount} rows, got ${bytes.byteLength}`);
  }
}

/**
 * Float64Array of a stored numeric column (NaN where missing). Zero-copy when `bytes` is
 * 8-byte aligned on a little-endian machine; otherwise one copy. The result may share
 * memory with `bytes`: do not modify either while the other is in use.
 */
export function decodeNumericValues(bytes: Uint8Array, rowCount: number): Float64Array {
  checkLength(bytes, rowCount, 8, 'decodeNumericValues');
  if (!LITTLE_ENDIAN) {
    const copy = swapped(bytes, 8);
    return new Float64Array(copy.buffer, copy.byteOffset, rowCount);
  }
  if (bytes.byteOffset % 8 === 0) return new Float64Array(bytes.buffer, bytes.byteOffset, rowCount);
  const out = new Float64Array(rowCount);
  new Uint8Array(out.buffer).set(bytes);
  return out;
}

/**
 * Int32Array of a stored text column's codes (-1 where missing). Zero-copy when aligned on
 * a little-endian machine; otherwise one copy. Throws if a code is outside the level list.
 */
export function decodeCodes(bytes: Uint8Array, rowCount: number, levelCount: number): Int32Array {
  checkLength(bytes, rowCount, 4, 'decodeCodes');
  let codes: Int32Array;
  if (!LITTLE_ENDIAN) {
    const copy = swapped(bytes, 4);
    codes = new Int32Array(copy.buffer, copy.byteOffset, rowCount);
  } else if (bytes.byteOffset % 4 === 0) {
    codes = new Int32Array(bytes.buffer, bytes.byteOffset, rowCount);
  } else {
    codes = new Int32Array(rowCount);
    new Uint8Array(codes.buffer).set(bytes);
  }
  for (let i = 0; i < rowCount; i++) {
    const code = codes[i];
    if (code < -1 || code >= levelCount) throw new RangeError(`decodeCodes: row ${i} has code ${code}, outside 0..${levelCount - 1}`);
  }
  return codes;
}

/** Checks a missing bitmap's length and returns it as a Uint8Array view (no copy). */
export function decodeMissing(bytes: Uint8Array, rowCount: number): Uint8Array {
  if (bytes.byteLength !== (rowCount + 7) >> 3) {
    throw new RangeError(`decodeMissing: expected ${(rowCount + 7) >> 3} bytes for ${rowCount} rows, got ${bytes.byteLength}`);
  }
  return new Uint8Array(bytes.buffer, bytes.byteOffset, bytes.byteLength);
}

/** Whether row `row` is marked missing in a bitmap. */
export function isMissing(bitmap: Uint8Array, row: number): boolean {
  return (bitmap[row >> 3] & (1 << (row & 7))) !== 0;
}

/** Expands a bitmap to one byte per row (1 = missing), for code that prefers a mask array. */
export function missingMask(bitmap: Uint8Array, rowCount: number): Uint8Array {
  const mask = new Uint8Array(rowCount);
  for (let row = 0; row < rowCount; row++) mask[row] = (bitmap[row >> 3] >> (row & 7)) & 1;
  return mask;
}
