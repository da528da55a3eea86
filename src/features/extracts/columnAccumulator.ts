/**
 * Builds columns from the reader's fields as they pass, without keeping the rows.
 *
 * Per column:
 * - numbers go into a growable Float64Array (NaN where the row is missing or text);
 * - text is dictionary-encoded as it arrives: an Int32Array of codes (-1 missing) into a
 *   list of distinct levels, keyed by the field's bytes, so no string is created for a
 *   value already seen. At `maxLevels` distinct values the dictionary stops learning and
 *   the column is flagged (its later new values get code -2 and are only screened);
 * - missing rows are a bitmap (bit `i & 7` of byte `i >> 3`);
 * - identifier-pattern counts for the screen (see identifierScreen.ts).
 *
 * A field is missing when it is empty after trimming spaces and tabs, or is one of the
 * shared missing-value tokens (NA, N/A, NULL, ".", "-", NaN in any letter case; see
 * src/engine/design/missingValues.ts) or an extra token of the caller's; each column counts
 * how often it met each token. A token is never a number or a level. A field is a number when it is
 * `[+-]digits[.digits][e[+-]digits]` (the decimal separator may be set to a comma for
 * semicolon files); anything else is text. A column with any text value is a text column
 * at the end; its numeric values then become levels in JavaScript's shortest round-trip
 * form (`007` -> `7`), while the raw digits were already screened as they passed.
 */
import { MISSING_TOKENS } from '../../engine/design/missingValues';
import { ExtractRefusalError } from './extractRefusal';
import { addPatternMask, classifyTextValue, emptyPatternCounts, isCompactDate, type PatternCounts } from './valuePatterns';

/** Options of {@link ColumnSet}. */
export interface ColumnSetOptions {
  /** Column names to drop while reading (compared ignoring case and surrounding spaces). */
  dropColumns?: readonly string[];
  /** Distinct text values kept per column before it stops learning levels. Default 50,000. */
  maxLevels?: number;
  /** Field values that mean "missing" besides the shared tokens (compared ignoring letter case). */
  missingTokens?: readonly string[];
  /** Decimal separator of numbers. Default ".". A comma is only possible with a non-comma delimiter. */
  decimalSeparator?: '.' | ',';
  /**
   * Size of the whole upload in bytes when known (Content-Length). Columns then reserve
   * room for the rows the file will probably hold, and re-estimate from the bytes per row
   * seen so far when they must grow, instead of doubling.
   */
  expectedBytes?: number;
}

/**
 * Shared by a file's columns: how much room to reserve. Without a size hint columns start
 * at 1,024 rows and double; with one they start at bytes / (2 bytes x columns), the most
 * rows the file can hold, and if that still proves short (the hint was wrong) grow to the
 * row count that the bytes read so far project for the whole file, plus 5%.
 */
class CapacityPlan {
  bytesRead = 0;
  constructor(readonly expectedBytes: number | undefined) {}

  initial(columnCount: number): number {
    if (this.expectedBytes === undefined) return 1024;
    // Every field takes at least 2 bytes (a character and a delimiter or line break), so
    // this is an upper bound for the file's rows; untouched room is never resident.
    return Math.max(1024, Math.min(Math.ceil(this.expectedBytes / (2 * Math.max(1, columnCount))), 50_000_000));
  }

  next(current: number, rows: number): number {
    const doubled = current * 2;
    if (this.expectedBytes === undefined || this.bytesRead <= 0) return doubled;
    const projected = Math.ceil(((rows * this.expectedBytes) / this.bytesRead) * 1.05);
    // At least 25% more each time, so that a poor estimate cannot cause many regrowths.
    return Math.max(Math.ceil(current * 1.25), Math.min(projected, doubled));
  }
}

/** A finished column of numbers. */
export interface NumericColumnData {
  kind: 'numeric';
  name: string;
  /** 0-based position in the file's header. */
  index: number;
  rowCount: number;
  /** One value per row; NaN where missing. */
  values: Float64Array;
  /** Bit i set when row i is missing. */
  missing: Uint8Array;
  missingCount: number;
  /** Largest number of decimal places written, or -1 when some value used an exponent or had over 15 digits. */
  maxDecimals: number;
  /** How often each missing-value token occurred (only tokens met), in the tokens' order. */
  missingTokens: TokenCount[];
  patterns: PatternCounts;
}

/** A missing-value token (as the shared list spells it) and its count in a column. */
export interface TokenCount {
  token: string;
  count: number;
}

/** A finished dictionary-encoded text column. */
export interface TextColumnData {
  kind: 'text';
  name: string;
  index: number;
  rowCount: number;
  /** One code per row into `levels`; -1 where missing; -2 for values not kept past the level cap. */
  codes: Int32Array;
  /** Distinct values, sorted by UTF-16 code unit (locale-independent), so equal files encode equally. */
  levels: string[];
  /** Rows per level. */
  levelCounts: Int32Array;
  missing: Uint8Array;
  missingCount: number;
  /** The dictionary hit its cap; `levels` is incomplete and the column cannot be stored. */
  levelsOverflowed: boolean;
  /** The level cap in force. */
  levelCap: number;
  /** Non-missing values that were numbers (kept as text levels). */
  numericValueCount: number;
  /** The numbers of the column, NaN elsewhere (kept for the age rule); null when there were none. */
  numericValues: Float64Array | null;
  /** Per level, the file line where it first occurred (0 where unknown, e.g. numbers of a mixed column). */
  levelFirstLines: Int32Array;
  missingTokens: TokenCount[];
  patterns: PatternCounts;
}

/** A finished column of either kind. */
export type ColumnData = NumericColumnData | TextColumnData;

const POW10 = [1, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9, 1e10, 1e11, 1e12, 1e13, 1e14, 1e15, 1e16, 1e17, 1e18, 1e19, 1e20, 1e21, 1e22];

// Side results of parseNumber, kept in module variables so the hot path allocates nothing.
let parsedDecimals = 0;
let parsedPlainDigits = false;

/**
 * Parses `bytes[start..end)` as a decimal number, or returns NaN when it is not one.
 * Up to 15 significant digits the value is `mantissa / 10^decimals`, which is correctly
 * rounded because both operands are exact doubles (Clinger, "How to read floating point
 * numbers accurately", PLDI 1990, the fast path); longer numbers and exponents go through
 * `Number()`, which is correctly rounded too. Sets `parsedDecimals` and `parsedPlainDigits`.
 */
export function parseNumber(bytes: Uint8Array, start: number, end: number, decimalByte: number): number {
  let i = start;
  let negative = false;
  let c = bytes[i];
  if (c === 45) {
    negative = true;
    i++;
  } else if (c === 43) i++;
  let mantissa = 0;
  let digits = 0;
  let decimals = 0;
  let sawPoint = false;
  for (; i < end; i++) {
    c = bytes[i];
    const d = c - 48;
    if (d >= 0 && d <= 9) {
      mantissa = mantissa * 10 + d;
      digits++;
      if (sawPoint) decimals++;
    } else if (c === decimalByte && !sawPoint) sawPoint = true;
    else break;
  }
  if (digits === 0) return NaN;
  if (i === end && digits <= 15) {
    parsedDecimals = decimals;
    parsedPlainDigits = !sawPoint && start === end - digits;
    const magnitude = decimals === 0 ? mantissa : mantissa / POW10[decimals];
    return negative ? -magnitude : magnitude;
  }
  if (i < end) {
    // Only an exponent may follow: e or E, optional sign, at least one digit.
    if (c !== 101 && c !== 69) return NaN;
    i++;
    if (i < end && (bytes[i] === 43 || bytes[i] === 45)) i++;
    if (i === end) return NaN;
    for (; i < end; i++) {
      const d = bytes[i] - 48;
      if (d < 0 || d > 9) return NaN;
    }
  }
  let text = '';
  for (let k = start; k < end; k++) text += bytes[k] === decimalByte ? '.' : String.fromCharCode(bytes[k]);
  parsedDecimals = -1;
  parsedPlainDigits = false;
  return Number(text);
}

const textDecoder = new TextDecoder('utf-8');

function decode(bytes: Uint8Array, start: number, end: number): string {
  return textDecoder.decode(bytes.subarray(start, end));
}

// Column arrays are allocated zeroed and written row by row, so that the room reserved
// beyond the rows actually read is never touched and costs address space, not memory.
function growFloat64(old: Float64Array, used: number, capacity: number): Float64Array<ArrayBuffer> {
  const grown = new Float64Array(capacity);
  grown.set(old.subarray(0, used));
  return grown;
}

function growCodes(old: Int32Array, used: number, capacity: number): Int32Array<ArrayBuffer> {
  const grown = new Int32Array(capacity);
  grown.set(old.subarray(0, used));
  return grown;
}

function growInt32(old: Int32Array, capacity: number, fill: number): Int32Array<ArrayBuffer> {
  const grown = new Int32Array(capacity);
  grown.set(old);
  grown.fill(fill, old.length);
  return grown;
}

function growBytes(old: Uint8Array, capacity: number): Uint8Array<ArrayBuffer> {
  const grown = new Uint8Array(capacity);
  grown.set(old);
  return grown;
}

/**
 * Open-addressing hash table from byte strings to level codes (FNV-1a hash, linear
 * probing), with the level bytes in one arena.
 */
class ByteDictionary {
  private table: Int32Array = new Int32Array(64).fill(-1);
  private mask = 63;
  private arena = new Uint8Array(1024);
  private arenaLength = 0;
  private starts = new Int32Array(16);
  private lengths = new Int32Array(16);
  private hashes = new Int32Array(16);
  size = 0;

  /** Code of the bytes, or -1 when they are not in the dictionary. */
  find(bytes: Uint8Array, start: number, end: number, hash: number): number {
    const length = end - start;
    let slot = hash & this.mask;
    for (;;) {
      const code = this.table[slot];
      if (code < 0) return -1;
      if (this.hashes[code] === hash && this.lengths[code] === length) {
        const at = this.starts[code];
        let same = true;
        for (let k = 0; k < length; k++) {
          if (this.arena[at + k] !== bytes[start + k]) {
            same = false;
            break;
          }
        }
        if (same) return code;
      }
      slot = (slot + 1) & this.mask;
    }
  }

  /** Adds bytes known to be absent; returns their code. */
  add(bytes: Uint8Array, start: number, end: number, hash: number): number {
    const code = this.size++;
    if (code === this.starts.length) {
      const capacity = code * 2;
      this.starts = growInt32(this.starts, capacity, 0);
      this.lengths = growInt32(this.lengths, capacity, 0);
      this.hashes = growInt32(this.hashes, capacity, 0);
    }
    const length = end - start;
    if (this.arenaLength + length > this.arena.length) {
      this.arena = growBytes(this.arena, Math.max(this.arena.length * 2, this.arenaLength + length));
    }
    this.arena.set(bytes.subarray(start, end), this.arenaLength);
    this.starts[code] = this.arenaLength;
    this.lengths[code] = length;
    this.hashes[code] = hash;
    this.arenaLength += length;
    if (this.size * 2 > this.table.length) this.rehash();
    else this.place(code, hash);
    return code;
  }

  private place(code: number, hash: number): void {
    let slot = hash & this.mask;
    while (this.table[slot] >= 0) slot = (slot + 1) & this.mask;
    this.table[slot] = code;
  }

  private rehash(): void {
    const size = this.table.length * 2;
    this.table = new Int32Array(size).fill(-1);
    this.mask = size - 1;
    for (let code = 0; code < this.size; code++) this.place(code, this.hashes[code]);
  }

  /** The level strings, in code order. */
  strings(): string[] {
    const out = new Array<string>(this.size);
    for (let code = 0; code < this.size; code++) {
      out[code] = decode(this.arena, this.starts[code], this.starts[code] + this.lengths[code]);
    }
    return out;
  }
}

function hashBytes(bytes: Uint8Array, start: number, end: number): number {
  let h = 0x811c9dc5;
  for (let k = start; k < end; k++) h = Math.imul(h ^ bytes[k], 0x01000193);
  return h & 0x7fffffff;
}

/** One column being accumulated. */
class ColumnBuilder {
  readonly name: string;
  readonly index: number;
  private readonly decimalByte: number;
  private readonly maxLevels: number;
  /** Tokens in upper case; a field matches ignoring the case of ASCII letters. */
  private readonly missingTokens: readonly Uint8Array[];
  private readonly tokenNames: readonly string[];
  private readonly tokenCounts: Int32Array;
  private readonly longestToken: number;
  private levelFirstRows = new Int32Array(16);
  private capacity: number;
  private readonly plan: CapacityPlan;
  rowCount = 0;
  missingCount = 0;
  private missing: Uint8Array;
  private values: Float64Array | null = null;
  private codes: Int32Array | null = null;
  private numericCount = 0;
  private maxDecimals = 0;
  private readonly dictionary = new ByteDictionary();
  private levelCounts = new Int32Array(16);
  private levelMasks = new Int32Array(16);
  private overflowed = false;
  /** Pattern hits of values that arrived after the level cap (not kept as levels). */
  private readonly overflowPatterns = emptyPatternCounts();
  private readonly patterns = emptyPatternCounts();

  constructor(
    name: string,
    index: number,
    plan: CapacityPlan,
    capacity: number,
    options: Required<Pick<ColumnSetOptions, 'maxLevels'>> & { decimalByte: number; missingTokens: readonly Uint8Array[]; tokenNames: readonly string[] },
  ) {
    this.name = name;
    this.index = index;
    this.plan = plan;
    this.capacity = capacity;
    this.decimalByte = options.decimalByte;
    this.maxLevels = options.maxLevels;
    this.missingTokens = options.missingTokens;
    this.tokenNames = options.tokenNames;
    this.tokenCounts = new Int32Array(options.tokenNames.length);
    this.longestToken = Math.max(...options.missingTokens.map((t) => t.length));
    this.missing = new Uint8Array((capacity + 7) >> 3);
  }

  private grow(): void {
    const capacity = this.plan.next(this.capacity, this.rowCount);
    this.capacity = capacity;
    this.missing = growBytes(this.missing, (capacity + 7) >> 3);
    const used = this.rowCount - 1;
    if (this.values !== null) this.values = growFloat64(this.values, used, capacity);
    if (this.codes !== null) this.codes = growCodes(this.codes, used, capacity);
  }

  /** Index of the token the field is (ASCII letters compared in upper case), or -1. */
  private tokenIndex(bytes: Uint8Array, start: number, end: number): number {
    const length = end - start;
    const tokens = this.missingTokens;
    for (let t = 0; t < tokens.length; t++) {
      const token = tokens[t];
      if (token.length !== length) continue;
      let same = true;
      for (let k = 0; k < length; k++) {
        const b = bytes[start + k];
        if (token[k] !== (b >= 97 && b <= 122 ? b - 32 : b)) {
          same = false;
          break;
        }
      }
      if (same) return t;
    }
    return -1;
  }

  accept(bytes: Uint8Array, start: number, end: number): void {
    while (start < end && (bytes[start] === 32 || bytes[start] === 9)) start++;
    while (end > start && (bytes[end - 1] === 32 || bytes[end - 1] === 9)) end--;
    const row = this.rowCount++;
    if (row === this.capacity) this.grow();
    const token = start === end ? 0 : end - start <= this.longestToken ? this.tokenIndex(bytes, start, end) : -1;
    if (token >= 0) {
      this.tokenCounts[token]++;
      this.missing[row >> 3] |= 1 << (row & 7);
      this.missingCount++;
      if (this.values !== null) this.values[row] = NaN;
      if (this.codes !== null) this.codes[row] = -1;
      return;
    }
    const value = parseNumber(bytes, start, end, this.decimalByte);
    if (value === value) {
      if (this.values === null) {
        this.values = new Float64Array(this.capacity);
        this.values.fill(NaN, 0, row);
      }
      this.values[row] = value;
      if (this.codes !== null) this.codes[row] = -1;
      this.numericCount++;
      if (parsedDecimals > this.maxDecimals || parsedDecimals < 0) {
        if (this.maxDecimals >= 0) this.maxDecimals = parsedDecimals;
      }
      if (parsedPlainDigits) {
        const length = end - start;
        if (length === 5) this.patterns.fiveDigitNumbers++;
        else if (length === 8 && isCompactDate(bytes, start)) this.patterns.compactDates++;
      }
      return;
    }
    this.acceptText(bytes, start, end, row);
  }

  private acceptText(bytes: Uint8Array, start: number, end: number, row: number): void {
    if (this.codes === null) {
      this.codes = new Int32Array(this.capacity);
      this.codes.fill(-1, 0, row);
    }
    if (this.values !== null) this.values[row] = NaN;
    const hash = hashBytes(bytes, start, end);
    let code = this.dictionary.find(bytes, start, end, hash);
    if (code < 0) {
      if (this.dictionary.size >= this.maxLevels) {
        this.overflowed = true;
        this.codes[row] = -2;
        addPatternMask(this.overflowPatterns, classifyTextValue(decode(bytes, start, end)), 1);
        return;
      }
      code = this.dictionary.add(bytes, start, end, hash);
      if (code === this.levelCounts.length) {
        this.levelCounts = growInt32(this.levelCounts, code * 2, 0);
        this.levelMasks = growInt32(this.levelMasks, code * 2, 0);
        this.levelFirstRows = growInt32(this.levelFirstRows, code * 2, -1);
      }
      this.levelFirstRows[code] = row;
      this.levelMasks[code] = classifyTextValue(decode(bytes, start, end));
    }
    this.codes[row] = code;
    this.levelCounts[code]++;
  }

  /** The tokens met, with their counts. */
  private tokensMet(): TokenCount[] {
    const out: TokenCount[] = [];
    this.tokenNames.forEach((token, index) => {
      if (this.tokenCounts[index] > 0) out.push({ token, count: this.tokenCounts[index] });
    });
    return out;
  }

  /** `lineOfRow` maps a 0-based data row to its file line (see ColumnSet). */
  finish(lineOfRow: (row: number) => number): ColumnData {
    const n = this.rowCount;
    const missing = this.missing.subarray(0, (n + 7) >> 3);
    const patterns = { ...this.patterns };
    if (this.codes === null) {
      return {
        kind: 'numeric',
        name: this.name,
        index: this.index,
        rowCount: n,
        values: this.values === null ? new Float64Array(n).fill(NaN) : this.values.subarray(0, n),
        missing,
        missingCount: this.missingCount,
        maxDecimals: this.maxDecimals,
        missingTokens: this.tokensMet(),
        patterns,
      };
    }
    const codes = this.codes.subarray(0, n);
    const values = this.values === null ? null : this.values.subarray(0, n);
    // Numbers in a text column become levels; their raw digits were screened already.
    let textLevelCount = this.dictionary.size;
    if (values !== null && !this.overflowed) {
      const extra = new Map<string, number>();
      const known = new Map<string, number>();
      const strings = this.dictionary.strings();
      for (let code = 0; code < strings.length; code++) known.set(strings[code], code);
      for (let row = 0; row < n; row++) {
        const v = values[row];
        if (v !== v) continue;
        const key = String(v);
        let code = known.get(key) ?? extra.get(key);
        if (code === undefined) {
          if (textLevelCount >= this.maxLevels) {
            this.overflowed = true;
            codes[row] = -2;
            continue;
          }
          code = textLevelCount++;
          extra.set(key, code);
          const bytes = Buffer.from(key);
          this.dictionary.add(bytes, 0, bytes.length, hashBytes(bytes, 0, bytes.length));
          if (code >= this.levelCounts.length) {
            this.levelCounts = growInt32(this.levelCounts, Math.max(code + 1, this.levelCounts.length * 2), 0);
            this.levelMasks = growInt32(this.levelMasks, this.levelCounts.length, 0);
            this.levelFirstRows = growInt32(this.levelFirstRows, this.levelCounts.length, -1);
          }
          this.levelFirstRows[code] = -1;
        }
        codes[row] = code;
        this.levelCounts[code]++;
      }
    } else if (values !== null) {
      for (let row = 0; row < n; row++) if (values[row] === values[row]) codes[row] = -2;
    }
    for (let code = 0; code < this.dictionary.size; code++) addPatternMask(patterns, this.levelMasks[code], this.levelCounts[code]);
    patterns.ssn += this.overflowPatterns.ssn;
    patterns.phone += this.overflowPatterns.phone;
    patterns.email += this.overflowPatterns.email;
    patterns.ipAddress += this.overflowPatterns.ipAddress;
    patterns.url += this.overflowPatterns.url;
    patterns.date += this.overflowPatterns.date;
    patterns.postalCode += this.overflowPatterns.postalCode;

    // Sort levels so that the encoding does not depend on row order.
    const unsorted = this.dictionary.strings();
    const order = unsorted.map((_, code) => code).sort((a, b) => (unsorted[a] < unsorted[b] ? -1 : unsorted[a] > unsorted[b] ? 1 : 0));
    const newCode = new Int32Array(order.length);
    const levels = new Array<string>(order.length);
    const levelCounts = new Int32Array(order.length);
    const levelFirstLines = new Int32Array(order.length);
    for (let k = 0; k < order.length; k++) {
      newCode[order[k]] = k;
      levels[k] = unsorted[order[k]];
      levelCounts[k] = this.levelCounts[order[k]];
      const firstRow = this.levelFirstRows[order[k]];
      levelFirstLines[k] = firstRow >= 0 ? lineOfRow(firstRow) : 0;
    }
    for (let row = 0; row < n; row++) {
      const code = codes[row];
      if (code >= 0) codes[row] = newCode[code];
    }
    return {
      kind: 'text',
      name: this.name,
      index: this.index,
      rowCount: n,
      codes,
      levels,
      levelCounts,
      missing,
      missingCount: this.missingCount,
      levelsOverflowed: this.overflowed,
      levelCap: this.maxLevels,
      numericValueCount: this.numericCount,
      numericValues: values,
      levelFirstLines,
      missingTokens: this.tokensMet(),
      patterns,
    };
  }
}

/** Default cap on distinct text values kept per column. */
export const DEFAULT_MAX_LEVELS = 50_000;

/**
 * The reader's sink: routes every field to its column's builder, skipping dropped
 * columns (their fields are never copied or kept). Implements `CsvSink` from csvReader.ts.
 */
export class ColumnSet {
  private builders: (ColumnBuilder | null)[] = [];
  private readonly options: ColumnSetOptions;
  private readonly drop: Set<string>;
  private readonly plan: CapacityPlan;
  /** Names of the columns dropped while reading, in file order. */
  readonly droppedColumns: string[] = [];
  /**
   * Where rows start: (row, line) pairs wherever a record does not begin on the line after
   * the previous one (blank lines, quoted line breaks); in between lines follow rows.
   */
  private markRows = new Int32Array(16);
  private markLines = new Int32Array(16);
  private marks = 0;
  private records = 0;
  private nextLine = -1;

  /**
   * @param options see {@link ColumnSetOptions}
   */
  constructor(options: ColumnSetOptions = {}) {
    this.options = options;
    this.drop = new Set((options.dropColumns ?? []).map((name) => name.trim().toLowerCase()));
    this.plan = new CapacityPlan(options.expectedBytes);
  }

  /** Tells the columns how far into the upload the reader is (for sizing their arrays). */
  noteBytesRead(bytesRead: number): void {
    this.plan.bytesRead = bytesRead;
  }

  /** Creates one builder per kept column; refuses a drop list naming a column the header lacks. */
  header(names: readonly string[]): void {
    const decimalByte = (this.options.decimalSeparator ?? '.') === ',' ? 44 : 46;
    const tokenNames: string[] = [...MISSING_TOKENS];
    for (const extra of this.options.missingTokens ?? []) {
      const trimmed = extra.trim();
      if (trimmed !== '' && !tokenNames.some((t) => t.toUpperCase() === trimmed.toUpperCase())) tokenNames.push(trimmed);
    }
    const missingTokens = tokenNames.map((t) => Buffer.from(t.toUpperCase()));
    const capacity = this.plan.initial(names.length);
    const maxLevels = this.options.maxLevels ?? DEFAULT_MAX_LEVELS;
    const matched = new Set<string>();
    this.builders = names.map((name, index) => {
      const key = name.toLowerCase();
      if (this.drop.has(key)) {
        matched.add(key);
        this.droppedColumns.push(name);
        return null;
      }
      return new ColumnBuilder(name, index, this.plan, capacity, { decimalByte, missingTokens, tokenNames, maxLevels });
    });
    const unmatched = (this.options.dropColumns ?? []).filter((name) => !matched.has(name.trim().toLowerCase()));
    if (unmatched.length > 0) {
      const list = unmatched.map((name) => `"${name}"`).join(', ');
      throw new ExtractRefusalError('unknown-drop-column', `Line 1: the header has no column named ${list} to drop.`, 1);
    }
  }

  /** One field; dropped columns ignore it. */
  field(column: number, bytes: Uint8Array, start: number, end: number): void {
    const builder = this.builders[column];
    if (builder !== null) builder.accept(bytes, start, end);
  }

  /** Notes the line where the record began (every builder counts its own rows). */
  endRecord(line?: number): void {
    const row = this.records++;
    if (line === undefined || line === this.nextLine) {
      this.nextLine++;
      return;
    }
    if (this.marks === this.markRows.length) {
      this.markRows = growInt32(this.markRows, this.marks * 2, 0);
      this.markLines = growInt32(this.markLines, this.marks * 2, 0);
    }
    this.markRows[this.marks] = row;
    this.markLines[this.marks] = line;
    this.marks++;
    this.nextLine = line + 1;
  }

  /**
   * The file line (1-based, header on line 1) where data row `row` (0-based) began, when
   * the reader reported lines; else the line it would have in a file without blank lines.
   */
  lineOfRow(row: number): number {
    let low = 0;
    let high = this.marks - 1;
    if (high < 0 || this.markRows[0] > row) return row + 2;
    while (low < high) {
      const mid = (low + high + 1) >> 1;
      if (this.markRows[mid] <= row) low = mid;
      else high = mid - 1;
    }
    return this.markLines[low] + (row - this.markRows[low]);
  }

  /** The finished kept columns, in file order. */
  finish(): ColumnData[] {
    const out: ColumnData[] = [];
    const lineOfRow = (row: number): number => this.lineOfRow(row);
    for (const builder of this.builders) if (builder !== null) out.push(builder.finish(lineOfRow));
    return out;
  }
}
