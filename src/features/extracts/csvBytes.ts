/**
 * Byte-level helpers of the CSV reader: the bytes it looks for, UTF-8 validation, the
 * header line and delimiter detection, blank lines, and the wording of sizes and binary
 * content in refusals. Plain functions over byte arrays, no state.
 */
export const LF = 10;
export const CR = 13;
export const QUOTE = 34;
export const COMMA = 44;
export const SEMICOLON = 59;
export const TAB = 9;

export function delimiterName(byte: number): string {
  if (byte === SEMICOLON) return 'semicolon';
  if (byte === TAB) return 'tab';
  return 'comma';
}

export function countLineBreaks(bytes: Uint8Array, end: number): number {
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

/** The refusal for a NUL byte, naming the file type when its first bytes give it away. */
export function binaryMessage(b: Uint8Array, n: number, line: number): string {
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

/**
 * Locates the header: the first line that is not blank (spaces and tabs count as blank).
 * Returns null until its line break (outside quotes) has arrived.
 */
export function findHeaderLine(
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
export function detectDelimiter(head: Uint8Array): number {
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
export function skipBlankLines(bytes: Uint8Array): number {
  let lineStart = 0;
  for (let i = 0; i < bytes.length; i++) {
    const b = bytes[i];
    if (b === LF || b === CR) lineStart = i + 1;
    else if (b !== 32 && b !== TAB) return lineStart;
  }
  return bytes.length;
}

export function isBlank(bytes: Uint8Array): boolean {
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
