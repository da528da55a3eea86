/**
 * The record parser behind the CSV reader: a state machine over byte chunks that finds the
 * fields (quoted or not, across chunk boundaries), counts physical lines, checks the header
 * and the field count of every record, and hands each field to the sink as a byte range.
 * The chunk reader (csvReader.ts) feeds it once the header line has fixed the delimiter.
 */
import { ExtractRefusalError } from './extractRefusal';
import { CR, LF, QUOTE, delimiterName, formatBytes } from './csvBytes';

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

/** Parses records from chunks; subclassed by the chunk reader, which adds the checks on raw bytes. */
export class CsvRecordParser {
  private readonly sink: CsvSink;
  private readonly maxFieldBytes: number;
  private readonly maxColumns: number;
  private readonly names = new TextDecoder('utf-8');
  protected delimiter = -1;
  private mode: Mode = Mode.FieldStart;
  /** Physical line of the byte being parsed. */
  protected line = 1;
  /** Line on which the current record started. */
  protected recordLine = 1;
  /** Line on which the current quoted field opened. */
  private quoteLine = 1;
  /** A CR inside a quoted field was the last byte of a chunk (line counted once its LF-ness is known). */
  private quotedCrPending = false;
  private fieldIndex = 0;
  protected columnCount = -1;
  protected headerFields: string[] = [];
  protected recordCount = 0;
  protected blankLines = 0;
  /**
   * A field that spans chunks or contains doubled quotes is assembled here. A Buffer, as the
   * chunks of a file or request are: the field code then sees one kind of byte array, and
   * V8 does not have to give up and recompile it when the first such field arrives.
   */
  private scratch: Uint8Array = Buffer.alloc(1024);
  private scratchLength = 0;
  private usingScratch = false;
  /** The input so far ended with a line break (for the final line count). */
  protected endedWithBreak = false;

  constructor(sink: CsvSink, maxFieldBytes: number, maxColumns: number) {
    this.sink = sink;
    this.maxFieldBytes = maxFieldBytes;
    this.maxColumns = maxColumns;
  }

  // ---- the parser ---------------------------------------------------------------------

  private appendScratch(bytes: Uint8Array, start: number, end: number): void {
    const length = end - start;
    if (length <= 0) return;
    const needed = this.scratchLength + length;
    if (needed > this.maxFieldBytes) this.fieldTooLong();
    if (needed > this.scratch.length) {
      const grown = Buffer.alloc(Math.max(needed, this.scratch.length * 2));
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

  protected parse(bytes: Uint8Array): void {
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
  protected flushEnd(): void {
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
