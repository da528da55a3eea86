/**
 * CSV writing shared by every download (results tables, the audit trail export).
 */

/** Characters that make a spreadsheet read a text field as a formula (OWASP "CSV Injection"). */
const FORMULA_START = /^[=+\-@\t\r\n]/;

/**
 * One CSV field. Text is neutralised first, then quoted: a text field starting with =, +,
 * -, @, tab, CR or LF gets a leading apostrophe (OWASP "CSV Injection"), and a field with
 * a comma, quote, CR or LF is wrapped in double quotes with inner quotes doubled (RFC 4180).
 *
 * Numbers are different: a finite number that this module computed is written as the
 * plain shortest round-trip text, so "-0.31" stays a number a spreadsheet can sum. That is
 * safe because String() of a finite number only ever yields digits, ".", "e", "+" and a
 * leading "-", never a formula. Anything from the data (level names, column names, engine
 * messages) is passed as text and neutralised, even when it looks numeric ("-1" as a level
 * name becomes "'-1"). Null and non-finite numbers are empty fields.
 */
export function csvField(value: string | number | null | undefined): string {
  if (value === null || value === undefined) return '';
  if (typeof value === 'number') return Number.isFinite(value) ? String(value) : '';
  const neutral = FORMULA_START.test(value) ? `'${value}` : value;
  return /[",\r\n]/.test(neutral) ? `"${neutral.replace(/"/g, '""')}"` : neutral;
}

/** One CSV record (RFC 4180 lines end with CRLF). */
export function csvRecord(fields: readonly (string | number | null | undefined)[]): string {
  return `${fields.map(csvField).join(',')}\r\n`;
}
