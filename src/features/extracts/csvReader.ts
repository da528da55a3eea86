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
import { SEMICOLON, TAB, binaryMessage, countLineBreaks, detectDelimiter, findHeaderLine, firstInvalidUtf8Offset, formatBytes, isBlank, skipBlankLines } from './csvBytes';
import { CsvRecordParser, type CsvSink } from './csvRecordParser';

export { firstInvalidUtf8Offset, formatBytes } from './csvBytes';
export type { CsvSink } from './csvRecordParser';

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
  /** Compute the content hash (default true); false skips it, and `sha256` is then empty. */
  hash?: boolean;
}

/** What the reader learnt about the file once it has been read to the end. */
export interface CsvReadSummary {
  /** Hex SHA-256 of the raw uploaded bytes (BOM included): the extract's content hash; empty when not asked for. */
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

/**
 * The synchronous core of the reader: feed it chunks with {@link CsvChunkReader.push} and
 * call {@link CsvChunkReader.finish} at the end of the input. Throws
 * {@link ExtractRefusalError} as soon as the input is known to be unacceptable, without
 * consuming the rest. Wrap it in a stream or an async loop (see {@link readCsv}). The
 * records themselves are parsed by {@link CsvRecordParser} (csvRecordParser.ts).
 */
export class CsvChunkReader extends CsvRecordParser {
  private readonly maxBytes: number;
  private readonly maxHeaderBytes: number;
  private readonly hash: Hash | null;
  private readonly utf8 = new TextDecoder('utf-8', { fatal: true });

  private byteCount = 0;
  /** The last chunk ended inside a multi-byte sequence, so the next one must be decoded. */
  private utf8Pending = false;
  /** First bytes of the file, for a clearer message about binary content. */
  private readonly leading = new Uint8Array(8);
  private leadingLength = 0;

  /**
   * Bytes held back until the header line is complete (its delimiter is not yet known). A
   * Buffer, like the scratch of the record parser (csvRecordParser.ts), since the first
   * records are parsed from it.
   */
  private headBuffer: Uint8Array | null = Buffer.alloc(4096);
  private headLength = 0;
  private hadBom = false;

  private finished = false;

  /**
   * @param sink receives the header and the records
   * @param options limits; see {@link CsvReaderOptions}
   */
  constructor(sink: CsvSink, options: CsvReaderOptions = {}) {
    super(sink, options.maxFieldBytes ?? 1024 * 1024, options.maxColumns ?? 2000);
    this.maxBytes = options.maxBytes ?? DEFAULT_MAX_BYTES;
    this.maxHeaderBytes = options.maxHeaderBytes ?? 1024 * 1024;
    this.hash = options.hash === false ? null : createHash('sha256');
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
    this.hash?.update(chunk);
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
      sha256: this.hash === null ? '' : this.hash.digest('hex'),
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
      throw new ExtractRefusalError('not-text', binaryMessage(this.leading, this.leadingLength, this.lineOfOffset(chunk, nul)), this.lineOfOffset(chunk, nul));
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
      buffer = Buffer.alloc(Math.max(needed, head.length * 2));
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
