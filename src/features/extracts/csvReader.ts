/**
 * Streaming CSV reader for cohort extracts.
 *
 * It consumes the upload as a sequence of byte chunks and never holds the whole file: a
 * chunk is checked (size limit, NUL bytes, UTF-8), hashed (SHA-256 of the raw bytes, the
 * content hash that runs pin) and parsed, and every field is handed to a {@link CsvSink}
 * as a byte range that is only valid during the call.
 *
 * Dialect (RFC 4180, with the usual relaxations):
 * - optional UTF-8 byte-order mark, which is not part of the first column name;
 * - the delimiter is detected from the header line: whichever of comma, semicolon and tab
 *   occurs most often outside quotes (ties and none go to comma);
 * - records end with LF, CRLF or a lone CR; a trailing line break is optional; lines that
 *   are completely empty are skipped wherever they occur;
 * - a field that starts with `"` is quoted: it may contain delimiters, line breaks and
 *   doubled quotes (`""` stands for one `"`), and its closing quote must be followed by a
 *   delimiter or a line break; a `"` inside an unquoted field is kept as a literal byte;
 * - the header is required, every column needs a non-empty name (after trimming spaces),
 *   names must be unique ignoring case, and every record must have as many fields as the
 *   header.
 *
 * Line numbers in refusals are physical lines of the file, 1-based, the header on line 1.
 */
import { createHash, type Hash } from 'node:crypto';
import { isAscii } from 'node:buffer';
import { ExtractRefusalError } from './extractRefusal';

const LF = 10;
const CR = 13;
const QUOTE = 34;
const COMMA = 44;
const SEMICOLON = 59;
const TAB = 9;

/** Receives the parsed records. Byte ranges are only valid during the call. */
export interface CsvSink {
  /** Called once with the validated column names (in file order). */
  header(names: readonly string[]): void;
  /** One field of the current data record; `column` counts from 0. */
  field(column: number, bytes: Uint8Array, start: number, end: number): void;
  /**
   * The current data record is complete (it had exactly as many fields as the header);
   * `line` is the physical line (1-based, header on line 1) where it began.
   */
  endRecord(line?: number): void;
}

/** Options of {@link CsvChunkReader}. */
export interface CsvReaderOptions {
  /** Largest accepted upload in bytes, counted as the bytes arrive. Default 500 MiB. */
  maxBytes?: number;
  /** Longest accepted header line in bytes. Default 1 MiB. */
  maxHeaderBytes?: number;
  /** Longest accepted single field in bytes (bounds memory for a quote never closed). Default 1 MiB. */
  maxFieldBytes?: number;
  /** Most columns accepted. Default 2,000. */
  maxColumns?: number;
}

/** What the reader learnt about the file once it has been read to the end. */
export interface CsvReadSummary {
  /** Hex SHA-256 of the raw uploaded bytes (BOM included): the extract's content hash. */
  sha256: string;
  /** Bytes received. */
  byteCount: number;
  /** Data records (the header not counted). */
  recordCount: number;
  /** Column names as written in the header (trimmed). */
  columnNames: string[];
  /** The detected delimiter. */
  delimiter: ',' | ';' | '\t';
  /** Whether the file started with a UTF-8 byte-order mark. */
  hadByteOrderMark: boolean;
  /** Physical lines in the file (a final line break does not start a new line). */
  lineCount: number;
  /** Completely empty lines that were skipped. */
  blankLinesSkipped: number;
}

/** Default upload limit: 500 MiB. */
export const DEFAULT_MAX_BYTES = 500 * 1024 * 1024;

const enum Mode {
  /** At the start of a field (or of a record). */
  FieldStart,
  /** Inside an unquoted field that began in an earlier chunk (its bytes are in scratch). */
  Unquoted,
  /** Inside a quoted field. */
  Quoted,
  /** Just saw a `"` inside a quoted field as the last byte of a chunk. */
  QuotedAfterQuote,
  /** Just ended a record with CR as the last byte of a chunk; a leading LF is skipped. */
  AfterCr,
}

function delimiterName(byte: number): string {
  if (byte === SEMICOLON) return 'semicolon';
  if (byte === TAB) return 'tab';
  return 'comma';
}

function countLineBreaks(bytes: Uint8Array, end: number): number {
  let breaks = 0;
  for (let i = 0; i < end; i++) {
    const b = bytes[i];
    if (b === LF) breaks++;
    else if (b === CR && bytes[i + 1] !== LF) breaks++;
  }
  return breaks;
}

/**
 * Offset of the first byte that makes `bytes` invalid UTF-8 (Unicode 15, table 3-7:
 * no overlong forms, no surrogates, nothing above U+10FFFF), or -1. A sequence cut off
 * by the end of `bytes` counts as invalid only when `final` is true.
 */
export function firstInvalidUtf8Offset(bytes: Uint8Array, final: boolean): number {
  const n = bytes.length;
  let i = 0;
  while (i < n) {
    const b = bytes[i];
    if (b < 0x80) {
      i++;
      continue;
    }
    let need: number;
    let lo = 0x80;
    let hi = 0xbf;
    if (b >= 0xc2 && b <= 0xdf) need = 1;
    else if (b >= 0xe0 && b <= 0xef) {
      need = 2;
      if (b === 0xe0) lo = 0xa0;
      if (b === 0xed) hi = 0x9f;
    } else if (b >= 0xf0 && b <= 0xf4) {
      need = 3;
      if (b === 0xf0) lo = 0x90;
      if (b === 0xf4) hi = 0x8f;
    } else return i;
    for (let k = 1; k <= need; k++) {
      if (i + k >= n) return final ? i : -1;
      const c = bytes[i + k];
      const min = k === 1 ? lo : 0x80;
      const max = k === 1 ? hi : 0xbf;
      if (c < min || c > max) return i;
    }
    i += need + 1;
  }
  return -1;
}

/**
 * The synchronous core of the reader: feed it chunks with {@link CsvChunkReader.push} and
 * call {@link CsvChunkReader.finish} at the end of the input. Throws
 * {@link ExtractRefusalError} as soon as the input is known to be unacceptable, without
 * consuming the rest. Wrap it in a stream or an async loop (see {@link readCsv}).
 */
export class CsvChunkReader {
  private readonly sink: CsvSink;
  private readonly maxBytes: number;
  private readonly maxHeaderBytes: number;
  private readonly maxFieldBytes: number;
  private readonly maxColumns: number;
  private readonly hash: Hash = createHash('sha256');
  private readonly utf8 = new TextDecoder('utf-8', { fatal: true });
  private readonly names = new TextDecoder('utf-8');

  private byteCount = 0;
  /** The last chunk ended inside a multi-byte sequence, so the next one must be decoded. */
  private utf8Pending = false;
  /** First bytes of the file, for a clearer message about binary content. */
  private readonly leading = new Uint8Array(8);
  private leadingLength = 0;

  /** Bytes held back until the header line is complete (its delimiter is not yet known). */
  private headBuffer: Uint8Array | null = new Uint8Array(4096);
  private headLength = 0;
  private hadBom = false;

  private delimiter = -1;
  private mode: Mode = Mode.FieldStart;
  /** Physical line of the byte being parsed. */
  private line = 1;
  /** Line on which the current record started. */
  private recordLine = 1;
  /** Line on which the current quoted field opened. */
  private quoteLine = 1;
  /** A CR inside a quoted field was the last byte of a chunk (line counted once its LF-ness is known). */
  private quotedCrPending = false;
  private fieldIndex = 0;
  private columnCount = -1;
  private headerFields: string[] = [];
  private recordCount = 0;
  private blankLines = 0;
  /** A field that spans chunks or contains doubled quotes is assembled here. */
  private scratch = new Uint8Array(1024);
  private scratchLength = 0;
  private usingScratch = false;
  private finished = false;
  /** The input so far ended with a line break (for the final line count). */
  private endedWithBreak = false;

  /**
   * @param sink receives the header and the records
   * @param options limits; see {@link CsvReaderOptions}
   */
  constructor(sink: CsvSink, options: CsvReaderOptions = {}) {
    this.sink = sink;
    this.maxBytes = options.maxBytes ?? DEFAULT_MAX_BYTES;
    this.maxHeaderBytes = options.maxHeaderBytes ?? 1024 * 1024;
    this.maxFieldBytes = options.maxFieldBytes ?? 1024 * 1024;
    this.maxColumns = options.maxColumns ?? 2000;
  }

  /** Bytes received so far. */
  get bytesRead(): number {
    return this.byteCount;
  }

  /** Data records completed so far. */
  get recordsRead(): number {
    return this.recordCount;
  }

  /**
   * Check, hash and parse one chunk. Throws {@link ExtractRefusalError}; after a throw the
   * reader must not be used again.
   */
  push(chunk: Uint8Array): void {
    if (this.finished) throw new Error('CsvChunkReader.push after finish');
    if (chunk.length === 0) return;
    this.byteCount += chunk.length;
    if (this.byteCount > this.maxBytes) {
      throw new ExtractRefusalError(
        'too-large',
        `The file is larger than the limit of ${formatBytes(this.maxBytes)}; reading stopped at ${formatBytes(this.byteCount)}.`,
      );
    }
    this.hash.update(chunk);
    this.keepLeading(chunk);
    this.checkText(chunk);
    if (this.headBuffer !== null) {
      this.collectHead(chunk);
      return;
    }
    this.parse(chunk);
  }

  /**
   * Signal the end of the input: flushes the last record and checks the file as a whole
   * (not empty, a header, at least one data record, no open quote).
   */
  finish(): CsvReadSummary {
    if (this.finished) throw new Error('CsvChunkReader.finish called twice');
    this.finished = true;
    try {
      this.utf8.decode();
    } catch {
      throw new ExtractRefusalError(
        'invalid-utf8',
        `Line ${this.line}: the file ends in the middle of a multi-byte character, so it is not valid UTF-8 text. Save or export it as UTF-8 and upload again.`,
        this.line,
      );
    }
    if (this.headBuffer !== null) {
      const head = this.headBuffer.subarray(0, this.headLength);
      this.headBuffer = null;
      const body = this.stripBom(head);
      if (isBlank(body)) {
        throw new ExtractRefusalError('empty-file', 'The file is empty: it has no header row and no data.');
      }
      const header = findHeaderLine(body, 0, body.length);
      const from = header === null ? skipBlankLines(body) : header.lineStart;
      const skipped = countLineBreaks(body, from);
      this.line += skipped;
      this.recordLine = this.line;
      this.blankLines += skipped;
      this.delimiter = detectDelimiter(body.subarray(from));
      this.parse(body.subarray(from));
    }
    this.flushEnd();
    if (this.columnCount < 0) {
      throw new ExtractRefusalError('empty-file', 'The file is empty: it has no header row and no data.');
    }
    if (this.recordCount === 0) {
      throw new ExtractRefusalError(
        'header-only',
        'The file has a header row but no data rows below it.',
        this.line,
      );
    }
    return {
      sha256: this.hash.digest('hex'),
      byteCount: this.byteCount,
      recordCount: this.recordCount,
      columnNames: this.headerFields.slice(),
      delimiter: this.delimiter === SEMICOLON ? ';' : this.delimiter === TAB ? '\t' : ',',
      hadByteOrderMark: this.hadBom,
      lineCount: this.endedWithBreak ? this.line - 1 : this.line,
      blankLinesSkipped: this.blankLines,
    };
  }

  // ---- checks on raw bytes ------------------------------------------------------------

  private keepLeading(chunk: Uint8Array): void {
    if (this.leadingLength >= this.leading.length) return;
    const take = Math.min(chunk.length, this.leading.length - this.leadingLength);
    this.leading.set(chunk.subarray(0, take), this.leadingLength);
    this.leadingLength += take;
  }

  private lineOfOffset(chunk: Uint8Array, offset: number): number {
    // Lines already completed before this chunk plus the breaks inside it up to `offset`.
    // While the header is still being collected, its bytes have not been parsed yet.
    const pendingHead = this.headBuffer !== null ? this.headBuffer.subarray(0, this.headLength) : null;
    const before = pendingHead ? countLineBreaks(pendingHead, pendingHead.length) : 0;
    return this.line + before + countLineBreaks(chunk, offset);
  }

  private checkText(chunk: Uint8Array): void {
    const nul = chunk.indexOf(0);
    if (nul >= 0) {
      throw new ExtractRefusalError('not-text', this.binaryMessage(this.lineOfOffset(chunk, nul)), this.lineOfOffset(chunk, nul));
    }
    // ASCII chunks cannot be invalid unless a multi-byte sequence is still open.
    if (!this.utf8Pending && isAscii(chunk)) return;
    try {
      this.utf8.decode(chunk, { stream: true });
    } catch {
      const offset = Math.max(0, firstInvalidUtf8Offset(chunk, false));
      const line = this.lineOfOffset(chunk, offset);
      throw new ExtractRefusalError(
        'invalid-utf8',
        `Line ${line}: the file is not valid UTF-8 text (it may have been saved in another encoding, such as Windows-1252 or Latin-1). Save or export it as UTF-8 and upload again.`,
        line,
      );
    }
    this.utf8Pending = chunk[chunk.length - 1] >= 0x80;
  }

  private binaryMessage(line: number): string {
    const b = this.leading;
    const n = this.leadingLength;
    if (n >= 2 && ((b[0] === 0xff && b[1] === 0xfe) || (b[0] === 0xfe && b[1] === 0xff))) {
      return 'The file is saved as UTF-16 text, not UTF-8. Save or export it as "CSV UTF-8" and upload again.';
    }
    if (n >= 4 && b[0] === 0x50 && b[1] === 0x4b && b[2] === 0x03 && b[3] === 0x04) {
      return 'The file is a ZIP archive or a spreadsheet workbook (such as .xlsx), not CSV text. Export the sheet as CSV and upload that.';
    }
    if (n >= 4 && b[0] === 0x25 && b[1] === 0x50 && b[2] === 0x44 && b[3] === 0x46) {
      return 'The file is a PDF document, not CSV text.';
    }
    return `Line ${line}: the file contains binary data (a NUL byte), so it is not CSV text. Upload a CSV file exported as UTF-8 text.`;
  }

  // ---- header collection and delimiter detection -----------------------------------------

  private stripBom(bytes: Uint8Array): Uint8Array {
    if (bytes.length >= 3 && bytes[0] === 0xef && bytes[1] === 0xbb && bytes[2] === 0xbf) {
      this.hadBom = true;
      return bytes.subarray(3);
    }
    return bytes;
  }

  private collectHead(chunk: Uint8Array): void {
    const head = this.headBuffer as Uint8Array;
    const needed = this.headLength + chunk.length;
    let buffer = head;
    if (needed > head.length) {
      buffer = new Uint8Array(Math.max(needed, head.length * 2));
      buffer.set(head.subarray(0, this.headLength));
      this.headBuffer = buffer;
    }
    buffer.set(chunk, this.headLength);
    this.headLength = needed;
    const start = this.headLength >= 3 && buffer[0] === 0xef && buffer[1] === 0xbb && buffer[2] === 0xbf ? 3 : 0;
    const header = findHeaderLine(buffer, start, this.headLength);
    if (header === null) {
      if (this.headLength - start > this.maxHeaderBytes) {
        throw new ExtractRefusalError(
          'header-too-long',
          `Line 1: the header row is longer than ${formatBytes(this.maxHeaderBytes)} (or a quote in it is never closed).`,
          1,
        );
      }
      return;
    }
    const all = buffer.subarray(0, this.headLength);
    this.headBuffer = null;
    this.stripBom(all);
    // Blank (or spaces-only) lines above the header are skipped but still counted.
    this.line += header.skippedLines;
    this.recordLine = this.line;
    this.blankLines += header.skippedLines;
    this.delimiter = detectDelimiter(buffer.subarray(header.lineStart, header.lineEnd));
    // The head buffer is private, so parsing it in place is safe.
    this.parse(all.subarray(header.lineStart));
  }

  // ---- the parser ---------------------------------------------------------------------

  private appendScratch(bytes: Uint8Array, start: number, end: number): void {
    const length = end - start;
    if (length <= 0) return;
    const needed = this.scratchLength + length;
    if (needed > this.maxFieldBytes) this.fieldTooLong();
    if (needed > this.scratch.length) {
      const grown = new Uint8Array(Math.max(needed, this.scratch.length * 2));
      grown.set(this.scratch.subarray(0, this.scratchLength));
      this.scratch = grown;
    }
    this.scratch.set(bytes.subarray(start, end), this.scratchLength);
    this.scratchLength = needed;
  }

  private fieldTooLong(): never {
    if (this.mode === Mode.Quoted || this.mode === Mode.QuotedAfterQuote) {
      throw new ExtractRefusalError(
        'unterminated-quote',
        `Line ${this.quoteLine}: a quoted field opens here and is not closed within ${formatBytes(this.maxFieldBytes)}; check for a missing closing quote (").`,
        this.quoteLine,
      );
    }
    throw new ExtractRefusalError(
      'field-too-long',
      `Line ${this.recordLine}: a field is longer than ${formatBytes(this.maxFieldBytes)}.`,
      this.recordLine,
    );
  }

  private emit(bytes: Uint8Array, start: number, end: number): void {
    if (end - start > this.maxFieldBytes) this.fieldTooLong();
    if (this.columnCount < 0) {
      if (this.fieldIndex >= this.maxColumns) {
        throw new ExtractRefusalError(
          'too-many-columns',
          `Line 1: the header has more than ${this.maxColumns} columns.`,
          1,
        );
      }
      this.headerFields.push(this.names.decode(bytes.subarray(start, end)).trim());
      return;
    }
    if (this.fieldIndex >= this.columnCount) this.ragged(this.fieldIndex + 1);
    this.sink.field(this.fieldIndex, bytes, start, end);
  }

  private ragged(fields: number): never {
    const more = fields > this.columnCount ? 'at least ' : '';
    throw new ExtractRefusalError(
      'ragged-row',
      `Line ${this.recordLine}: this row has ${more}${fields} field${fields === 1 ? '' : 's'} but the header has ${this.columnCount}. Every row must have as many fields as the header.`,
      this.recordLine,
    );
  }

  private endRecord(): void {
    if (this.columnCount < 0) {
      this.acceptHeader();
    } else {
      if (this.fieldIndex + 1 !== this.columnCount) this.ragged(this.fieldIndex + 1);
      this.recordCount++;
      this.sink.endRecord(this.recordLine);
    }
    this.fieldIndex = 0;
  }

  private acceptHeader(): void {
    const names = this.headerFields;
    const seen = new Map<string, number>();
    for (let i = 0; i < names.length; i++) {
      const name = names[i];
      if (name === '') {
        throw new ExtractRefusalError(
          'empty-column-name',
          `Line 1: column ${i + 1} of the header has no name. Every column needs a name.`,
          1,
        );
      }
      const key = name.toLowerCase();
      const first = seen.get(key);
      if (first !== undefined) {
        const same = names[first] === name ? `"${name}"` : `"${names[first]}" and "${name}"`;
        throw new ExtractRefusalError(
          'duplicate-column',
          `Line 1: columns ${first + 1} and ${i + 1} have the same name, ${same} (names are compared ignoring case). Column names must be unique.`,
          1,
        );
      }
      seen.set(key, i);
    }
    this.columnCount = names.length;
    this.sink.header(names.slice());
  }

  /** Handles the separator byte at `at`; returns the index after it. */
  private separator(bytes: Uint8Array, at: number): number {
    const b = bytes[at];
    if (b === this.delimiter) {
      this.fieldIndex++;
      this.endedWithBreak = false;
      return at + 1;
    }
    this.endRecord();
    this.line++;
    this.recordLine = this.line;
    this.endedWithBreak = true;
    if (b === CR) {
      if (at + 1 < bytes.length) return bytes[at + 1] === LF ? at + 2 : at + 1;
      this.mode = Mode.AfterCr;
    }
    return at + 1;
  }

  private parse(bytes: Uint8Array): void {
    const n = bytes.length;
    const d = this.delimiter;
    let i = 0;
    if (this.mode === Mode.AfterCr) {
      this.mode = Mode.FieldStart;
      if (bytes[0] === LF) i = 1;
    }
    if (this.quotedCrPending) {
      this.quotedCrPending = false;
      if (bytes[0] !== LF) this.line++;
    }
    while (i < n) {
      const mode = this.mode;
      if (mode === Mode.FieldStart) {
        const b = bytes[i];
        if (b === QUOTE) {
          this.mode = Mode.Quoted;
          this.quoteLine = this.line;
          this.endedWithBreak = false;
          this.scratchLength = 0;
          this.usingScratch = false;
          i = this.scanQuoted(bytes, i + 1);
          continue;
        }
        if (this.fieldIndex === 0 && (b === LF || b === CR)) {
          // A completely empty line: skipped, but still a physical line.
          this.blankLines++;
          this.line++;
          this.recordLine = this.line;
          this.endedWithBreak = true;
          if (b === CR) {
            if (i + 1 < n) i = bytes[i + 1] === LF ? i + 2 : i + 1;
            else {
              this.mode = Mode.AfterCr;
              i++;
            }
          } else i++;
          continue;
        }
        let j = i;
        while (j < n) {
          const c = bytes[j];
          if (c === d || c === LF || c === CR) break;
          j++;
        }
        this.endedWithBreak = false;
        if (j === n) {
          this.scratchLength = 0;
          this.appendScratch(bytes, i, n);
          this.mode = Mode.Unquoted;
          return;
        }
        this.emit(bytes, i, j);
        i = this.separator(bytes, j);
        continue;
      }
      if (mode === Mode.Unquoted) {
        let j = i;
        while (j < n) {
          const c = bytes[j];
          if (c === d || c === LF || c === CR) break;
          j++;
        }
        this.appendScratch(bytes, i, j);
        if (j === n) return;
        this.mode = Mode.FieldStart;
        this.emit(this.scratch, 0, this.scratchLength);
        i = this.separator(bytes, j);
        continue;
      }
      if (mode === Mode.Quoted) {
        // Resuming a quoted field in a new chunk: everything so far is in scratch.
        i = this.scanQuoted(bytes, i);
        continue;
      }
      // Mode.QuotedAfterQuote: the previous chunk ended with a quote inside a quoted field.
      const next = bytes[i];
      if (next === QUOTE) {
        this.appendScratch(bytes, i, i + 1);
        this.mode = Mode.Quoted;
        i = this.scanQuoted(bytes, i + 1);
        continue;
      }
      this.closeQuoted(bytes, i, this.scratch, 0, this.scratchLength);
      i = this.separator(bytes, i);
    }
  }

  /**
   * Scans a quoted field's content from `from`; the field's earlier content, if any, is in
   * scratch (`usingScratch`). Returns the index where parsing continues.
   */
  private scanQuoted(bytes: Uint8Array, from: number): number {
    const n = bytes.length;
    let segment = from;
    let j = from;
    for (;;) {
      while (j < n) {
        const c = bytes[j];
        if (c === QUOTE) break;
        if (c === LF) this.line++;
        else if (c === CR) {
          if (j + 1 < n) {
            if (bytes[j + 1] !== LF) this.line++;
          } else this.quotedCrPending = true;
        }
        j++;
      }
      if (j === n) {
        this.appendScratch(bytes, segment, n);
        this.usingScratch = true;
        this.mode = Mode.Quoted;
        return n;
      }
      // A quote at j: either a doubled quote or the end of the field.
      if (j + 1 === n) {
        this.appendScratch(bytes, segment, j);
        this.usingScratch = true;
        this.mode = Mode.QuotedAfterQuote;
        return n;
      }
      const next = bytes[j + 1];
      if (next === QUOTE) {
        this.appendScratch(bytes, segment, j + 1);
        this.usingScratch = true;
        j += 2;
        segment = j;
        continue;
      }
      if (this.usingScratch) {
        this.appendScratch(bytes, segment, j);
        this.closeQuoted(bytes, j + 1, this.scratch, 0, this.scratchLength);
      } else {
        this.closeQuoted(bytes, j + 1, bytes, segment, j);
      }
      return this.separator(bytes, j + 1);
    }
  }

  /** The byte after a closing quote must separate fields; then the field is emitted. */
  private closeQuoted(bytes: Uint8Array, after: number, field: Uint8Array, start: number, end: number): void {
    const next = bytes[after];
    if (next !== this.delimiter && next !== LF && next !== CR) {
      throw new ExtractRefusalError(
        'bad-quoting',
        `Line ${this.line}: a quoted field is followed by other characters before the next ${delimiterName(this.delimiter)}. Inside a quoted field, write a quote as two quotes ("").`,
        this.line,
      );
    }
    this.mode = Mode.FieldStart;
    this.emit(field, start, end);
  }

  /** End of input: completes a last record that has no final line break. */
  private flushEnd(): void {
    if (this.mode === Mode.Quoted) {
      throw new ExtractRefusalError(
        'unterminated-quote',
        `Line ${this.quoteLine}: a quoted field opens here and is never closed; check for a missing closing quote (").`,
        this.quoteLine,
      );
    }
    if (this.mode === Mode.QuotedAfterQuote) {
      this.mode = Mode.FieldStart;
      this.emit(this.scratch, 0, this.scratchLength);
      this.endRecord();
      return;
    }
    if (this.mode === Mode.Unquoted) {
      this.mode = Mode.FieldStart;
      this.emit(this.scratch, 0, this.scratchLength);
      this.endRecord();
      return;
    }
    if (this.mode === Mode.FieldStart && this.fieldIndex > 0) {
      // The file ends right after a delimiter: the last field is empty.
      this.emit(this.scratch, 0, 0);
      this.endRecord();
    }
  }
}

/**
 * Locates the header: the first line that is not blank (spaces and tabs count as blank).
 * Returns null until its line break (outside quotes) has arrived.
 */
function findHeaderLine(
  bytes: Uint8Array,
  start: number,
  end: number,
): { lineStart: number; lineEnd: number; skippedLines: number } | null {
  let lineStart = start;
  let skippedLines = 0;
  let quoted = false;
  let blank = true;
  for (let i = start; i < end; i++) {
    const b = bytes[i];
    if (b === QUOTE) {
      quoted = !quoted;
      blank = false;
    } else if (!quoted && (b === LF || b === CR)) {
      if (!blank) return { lineStart, lineEnd: i, skippedLines };
      if (b === CR && i + 1 < end && bytes[i + 1] === LF) i++;
      else if (b === CR && i + 1 === end) return null;
      skippedLines++;
      lineStart = i + 1;
    } else if (b !== 32 && b !== TAB) blank = false;
  }
  return null;
}

/** Comma, semicolon or tab: whichever occurs most often outside quotes in the header line. */
function detectDelimiter(head: Uint8Array): number {
  let commas = 0;
  let semicolons = 0;
  let tabs = 0;
  let quoted = false;
  for (let i = 0; i < head.length; i++) {
    const b = head[i];
    if (b === QUOTE) quoted = !quoted;
    else if (quoted) continue;
    else if (b === LF || b === CR) {
      if (commas + semicolons + tabs > 0) break;
    } else if (b === COMMA) commas++;
    else if (b === SEMICOLON) semicolons++;
    else if (b === TAB) tabs++;
  }
  if (semicolons > commas && semicolons >= tabs) return SEMICOLON;
  if (tabs > commas && tabs > semicolons) return TAB;
  return COMMA;
}

/** Offset of the first line that is not blank. */
function skipBlankLines(bytes: Uint8Array): number {
  let lineStart = 0;
  for (let i = 0; i < bytes.length; i++) {
    const b = bytes[i];
    if (b === LF || b === CR) lineStart = i + 1;
    else if (b !== 32 && b !== TAB) return lineStart;
  }
  return bytes.length;
}

function isBlank(bytes: Uint8Array): boolean {
  for (let i = 0; i < bytes.length; i++) {
    const b = bytes[i];
    if (b !== LF && b !== CR && b !== 32 && b !== TAB) return false;
  }
  return true;
}

/** "500 MiB", "1.5 KiB", "12 bytes". */
export function formatBytes(bytes: number): string {
  if (bytes < 1024) return `${bytes} bytes`;
  const units = ['KiB', 'MiB', 'GiB'];
  let value = bytes / 1024;
  let unit = 0;
  while (value >= 1024 && unit < units.length - 1) {
    value /= 1024;
    unit++;
  }
  const text = Number.isInteger(value) ? String(value) : value.toFixed(1);
  return `${text} ${units[unit]}`;
}

/** Options of {@link readCsv}. */
export interface ReadCsvOptions extends CsvReaderOptions {
  /** Called after every chunk with the bytes and records read so far. */
  onProgress?: (progress: { bytesRead: number; recordsRead: number }) => void;
  /** Aborting it stops reading with a `cancelled` refusal. */
  signal?: AbortSignal;
}

/**
 * Reads a whole CSV stream into `sink`. `source` is anything that yields byte chunks: a
 * Node Readable (an HTTP request), a web ReadableStream, a file stream or a generator.
 * On a refusal the source's iterator is closed (`return()`), so the upload stops there.
 */
export async function readCsv(
  source: AsyncIterable<Uint8Array | string> | Iterable<Uint8Array | string>,
  sink: CsvSink,
  options: ReadCsvOptions = {},
): Promise<CsvReadSummary> {
  const reader = new CsvChunkReader(sink, options);
  const { onProgress, signal } = options;
  for await (const chunk of source) {
    if (signal?.aborted) {
      throw new ExtractRefusalError('cancelled', 'The upload was cancelled.');
    }
    reader.push(typeof chunk === 'string' ? Buffer.from(chunk) : chunk);
    onProgress?.({ bytesRead: reader.bytesRead, recordsRead: reader.recordsRead });
  }
  if (signal?.aborted) throw new ExtractRefusalError('cancelled', 'The upload was cancelled.');
  return reader.finish();
}
