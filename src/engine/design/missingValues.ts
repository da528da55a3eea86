/**
 * The one list of missing-value tokens, shared by uploads, the dictionary, the engine and
 * the command line: a field that is empty, or reads NA, N/A, NULL, ".", "-" or NaN in any
 * letter case (spaces and tabs around it ignored), is missing. A token is never a level.
 *
 * Also here: the codes that often stand for "not known" in warehouse extracts without
 * being declared missing ("unknown", 999 ...), which earn a warning, never a silent drop.
 */

/** The tokens as they are shown and counted (the empty field first). */
export const MISSING_TOKENS = ['', 'NA', 'N/A', 'NULL', '.', '-', 'NaN'] as const;
export type MissingToken = (typeof MISSING_TOKENS)[number];

/** The longest token in bytes (fields longer than this are never tokens). */
export const MISSING_TOKEN_MAX_LENGTH = 4;

const BY_UPPER = new Map<string, MissingToken>(MISSING_TOKENS.map((token) => [token.toUpperCase(), token]));

/** The token a field stands for (its shown spelling), or null when the field is a value. */
export function missingTokenOf(field: string): MissingToken | null {
  const trimmed = field.replace(/^[ \t]+|[ \t]+$/g, '');
  if (trimmed.length > MISSING_TOKEN_MAX_LENGTH) return null;
  return BY_UPPER.get(trimmed.toUpperCase()) ?? null;
}

/** Whether a field is one of the missing-value tokens. */
export function isMissingToken(field: string): boolean {
  return missingTokenOf(field) !== null;
}

/** Words that usually mean "not known" when they appear as a level. */
const MISSING_WORDS = new Set(['unknown', 'unk', 'missing', 'not recorded', 'not known', 'not stated', 'not available', 'none recorded']);
/** Numeric codes that usually mean "not known" in a column of otherwise small numbers. */
const MISSING_NUMBERS = [9, 99, 999, 9999];

/**
 * Levels of a categorical column that look like undeclared missing-value codes: a word such
 * as "unknown", "missing" or "not recorded" (any case), or 9, 99, 999 or 9999 when every
 * other level is a number no larger than half the code (9 beside 1 to 5, 999 beside 0 to
 * 12). The levels are returned as written, in the column's order.
 */
export function suspectMissingLevels(levels: readonly string[]): string[] {
  const out: string[] = [];
  const numbers = levels.map((level) => (/^[+-]?\d+(\.\d+)?$/.test(level.trim()) ? Number(level) : Number.NaN));
  const allNumeric = numbers.every((value) => value === value);
  levels.forEach((level, index) => {
    if (MISSING_WORDS.has(level.trim().toLowerCase().replace(/\s+/g, ' '))) {
      out.push(level);
      return;
    }
    const value = numbers[index];
    if (!allNumeric || !MISSING_NUMBERS.includes(value) || levels.length < 2) return;
    const others = numbers.filter((_, other) => other !== index);
    if (others.every((other) => other <= (value + 1) / 2)) out.push(level);
  });
  return out;
}
