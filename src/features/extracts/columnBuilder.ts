/**
 * One column as it is read: numbers into a Float64Array, text dictionary-encoded, missing
 * rows in a bitmap, missing-value tokens counted and identifier patterns screened (see
 * columnAccumulator.ts for the rules), and the finished column at the end.
 */
import { ByteDictionary, decode, growBytes, growInt32, hashBytes } from './byteDictionary';
import type { ColumnData, ColumnSetOptions, TokenCount } from './columnTypes';
import { addPatternMask, classifyTextValue, emptyPatternCounts, isCompactDate, isNhsNumberDigits } from './valuePatterns';
import { lastParse, parseNumber } from './numberParsing';

/**
 * Shared by a file's columns: how much room to reserve. Without a size hint columns start
 * at 1,024 rows and double; with one they start at bytes / (2 bytes x columns), the most
 * rows the file can hold, and if that still proves short (the hint was wrong) grow to the
 * row count that the bytes read so far project for the whole file, plus 5%.
 */
export class CapacityPlan {
  bytesRead = 0;
  constructor(
    readonly expectedBytes: number | undefined,
    readonly expectedRows?: number,
  ) {}

  initial(columnCount: number): number {
    if (this.expectedRows !== undefined) return Math.max(8, this.expectedRows);
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

/** One column being accumulated. */
export class ColumnBuilder {
  readonly name: string;
  readonly index: number;
  private readonly decimalByte: number;
  private readonly maxLevels: number;
  /** Tokens in upper case; a field matches ignoring the case of ASCII letters. */
  private readonly missingTokens: readonly Uint8Array[];
  private readonly tokenNames: readonly string[];
  private readonly tokenCounts: Int32Array;
  private readonly longestToken: number;
  /** 1 for every byte a token can start with (both letter cases), so most fields skip the token comparison. */
  private readonly tokenFirstByte = new Uint8Array(256);
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
    for (const token of options.missingTokens) {
      if (token.length === 0) continue;
      const first = token[0];
      this.tokenFirstByte[first] = 1;
      if (first >= 65 && first <= 90) this.tokenFirstByte[first + 32] = 1;
    }
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
    const token =
      start === end ? 0 : end - start <= this.longestToken && this.tokenFirstByte[bytes[start]] === 1 ? this.tokenIndex(bytes, start, end) : -1;
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
      const decimals = lastParse.decimals;
      if (decimals > this.maxDecimals || decimals < 0) {
        if (this.maxDecimals >= 0) this.maxDecimals = decimals;
      }
      if (lastParse.plainDigits) {
        const length = end - start;
        if (length === 5) this.patterns.fiveDigitNumbers++;
        else if (length === 8 && isCompactDate(bytes, start)) this.patterns.compactDates++;
        else if (length === 10 && isNhsNumberDigits(bytes, start)) this.patterns.plainNhsNumbers++;
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
