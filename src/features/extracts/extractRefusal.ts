/**
 * The one error type the extract reader throws for input it will not accept.
 *
 * Every refusal carries a stable `code` (safe to match on in the API, the UI and tests),
 * a plain-English `message` meant for the analyst, the 1-based physical `line` of the file
 * where it applies (the header is line 1; a quoted field with embedded line breaks spans
 * several physical lines), and a suggested HTTP status.
 */

/** Stable codes of every reason the reader refuses an upload. */
export const EXTRACT_REFUSAL_CODES = [
  'empty-file',
  'header-only',
  'not-text',
  'invalid-utf8',
  'ragged-row',
  'unterminated-quote',
  'bad-quoting',
  'duplicate-column',
  'empty-column-name',
  'too-many-columns',
  'header-too-long',
  'field-too-long',
  'too-large',
  'unknown-drop-column',
  'cancelled',
] as const;

/** One of {@link EXTRACT_REFUSAL_CODES}. */
export type ExtractRefusalCode = (typeof EXTRACT_REFUSAL_CODES)[number];

/** A refused upload: thrown by the reader, never for a problem in Crossgrain itself. */
export class ExtractRefusalError extends Error {
  override readonly name = 'ExtractRefusalError';
  /** Stable machine-readable reason. */
  readonly code: ExtractRefusalCode;
  /** 1-based physical line of the file the refusal points at, when there is one. */
  readonly line: number | null;

  /**
   * @param code stable reason code
   * @param message plain-English explanation for the analyst (already includes the line)
   * @param line physical line number (1-based, header = 1) or null
   */
  constructor(code: ExtractRefusalCode, message: string, line: number | null = null) {
    super(message);
    this.code = code;
    this.line = line;
  }

  /** Suggested HTTP status: 413 for size, 499-style 400 for a cancel, 422 for content. */
  get status(): number {
    if (this.code === 'too-large') return 413;
    if (this.code === 'cancelled') return 400;
    return 422;
  }

  /** The shape the API returns for a refusal reason. */
  toJSON(): { code: ExtractRefusalCode; message: string; line: number | null } {
    return { code: this.code, message: this.message, line: this.line };
  }
}
