/**
 * Identifier screen for the detectable HIPAA Safe Harbor categories
 * (45 CFR 164.514(b)(2)(i); HHS OCR guidance on de-identification, 2012).
 *
 * Two kinds of evidence, both gathered on the streaming path:
 * - column names, split into lower-case words (`PatientDOB` -> `patient dob`), matched
 *   against word lists per category;
 * - value patterns. Text values are classified once per distinct value as the dictionary
 *   learns it, and the value's count is added, so every value of the column is examined
 *   (no sampling); beyond the level cap each further text value is classified as it
 *   passes. Plain numbers are checked on their raw digits while parsing (5-digit ZIP codes
 *   keep their leading zeros; 8-digit YYYYMMDD dates), and age values at the end.
 *
 * Each {@link Finding} names the column, the rule, how many values matched out of how many
 * were examined, never a value itself.
 *
 * The screen cannot see everything (free-text names, biometrics, images, rare formats);
 * the uploader's attestation covers the rest.
 *
 * The pieces: the name rules in columnNameRules.ts, the value patterns in valuePatterns.ts,
 * the findings and the refusal per column in identifierFindings.ts; this file weighs one
 * finished column's evidence.
 */
import { isAgeColumnName, screenColumnName } from './columnNameRules';
import type { Finding, FindingRule, SafeHarborCategory } from './identifierFindings';
import type { PatternCounts } from './valuePatterns';

/** What the screen needs to know about one finished column. */
export interface ColumnEvidence {
  name: string;
  index: number;
  /** Non-missing values in the column (all of them were examined). */
  nonMissing: number;
  patterns: PatternCounts;
  /** Numeric values (NaN where missing or text), for the age rule; null for text columns. */
  numericValues: Float64Array | null;
  /** Rows in the column. */
  rowCount: number;
  /** Distinct non-missing values, or null when not known exactly (see `levelsOverflowed`). */
  distinct: number | null;
  /** Whether every non-missing value is text (or an integer): near-uniqueness then means a code. */
  codeLike: boolean;
  /** The dictionary stopped storing levels at the cap. */
  levelsOverflowed: boolean;
  /** The level cap in force. */
  levelCap: number;
}

/** Thresholds of the screen. */
export interface ScreenOptions {
  /** Share of distinct non-missing values above which a code-like column is near-unique. Default 0.9. */
  nearUniqueShare: number;
  /** Fewest non-missing values for the near-unique rule. Default 50. */
  nearUniqueMinValues: number;
  /** Share of plain 5-digit numbers that makes a column look like ZIP codes. Default 0.5. */
  zipShare: number;
  /** Share of plain 8-digit YYYYMMDD numbers that makes a column look like dates. Default 0.5. */
  compactDateShare: number;
}

/** Defaults of {@link ScreenOptions}. */
export const DEFAULT_SCREEN_OPTIONS: ScreenOptions = {
  nearUniqueShare: 0.9,
  nearUniqueMinValues: 50,
  zipShare: 0.5,
  compactDateShare: 0.5,
};

function plural(count: number, one: string, many: string): string {
  return `${count.toLocaleString('en-US')} ${count === 1 ? one : many}`;
}

function valueFinding(
  column: ColumnEvidence,
  rule: FindingRule,
  category: SafeHarborCategory,
  matched: number,
  what: string,
): Finding {
  return {
    column: column.name,
    columnIndex: column.index,
    rule,
    category,
    matchedCount: matched,
    examinedCount: column.nonMissing,
    message: `Column "${column.name}": ${plural(matched, 'value', 'values')} of ${column.nonMissing.toLocaleString('en-US')} examined ${matched === 1 ? 'looks' : 'look'} like ${what}.`,
  };
}

/** The column's name points at a Safe Harbor category. */
function nameFinding(column: ColumnEvidence): Finding | null {
  const named = screenColumnName(column.name);
  if (named === null) return null;
  return {
    column: column.name,
    columnIndex: column.index,
    rule: 'column-name',
    category: named.category,
    matchedCount: null,
    examinedCount: null,
    message: `Column "${column.name}": its name suggests ${named.label}, a Safe Harbor identifier.`,
  };
}

/**
 * Findings from the value patterns. Strong patterns (SSN, phone, e-mail, IP, URL,
 * formatted dates and postcodes) refuse on a single value; plain 5-digit and 8-digit
 * numbers only when they make up the given share.
 */
function patternFindings(column: ColumnEvidence, options: ScreenOptions): Finding[] {
  const findings: Finding[] = [];
  const p = column.patterns;
  const n = column.nonMissing;
  if (p.ssn > 0) findings.push(valueFinding(column, 'ssn-pattern', 'ssn', p.ssn, 'social security numbers'));
  if (p.phone > 0) findings.push(valueFinding(column, 'phone-pattern', 'phone', p.phone, 'telephone or fax numbers'));
  if (p.email > 0) findings.push(valueFinding(column, 'email-pattern', 'email', p.email, 'e-mail addresses'));
  if (p.ipAddress > 0) findings.push(valueFinding(column, 'ip-address-pattern', 'ip-address', p.ipAddress, 'IP addresses'));
  if (p.url > 0) findings.push(valueFinding(column, 'url-pattern', 'url', p.url, 'web addresses (URLs)'));
  const compactDatesCount = n > 0 && p.compactDates / n >= options.compactDateShare ? p.compactDates : 0;
  if (p.date + compactDatesCount > 0) {
    findings.push(valueFinding(column, 'date-pattern', 'dates', p.date + compactDatesCount, 'dates with a day or month'));
  }
  const zipCount = n > 0 && p.fiveDigitNumbers / n >= options.zipShare ? p.fiveDigitNumbers : 0;
  if (p.postalCode + zipCount > 0) {
    findings.push(valueFinding(column, 'postal-code-pattern', 'geography', p.postalCode + zipCount, 'ZIP or postal codes'));
  }
  return findings;
}

/** Ages over 89 in a column whose name says it holds ages. */
function ageFinding(column: ColumnEvidence): Finding | null {
  if (column.numericValues === null || !isAgeColumnName(column.name)) return null;
  const values = column.numericValues;
  let over = 0;
  for (let i = 0; i < column.rowCount; i++) if (values[i] > 89) over++;
  if (over === 0) return null;
  return {
    ...valueFinding(column, 'age-over-89', 'age-over-89', over, 'ages over 89'),
    message: `Column "${column.name}": ${plural(over, 'age is', 'ages are')} over 89 (of ${column.nonMissing.toLocaleString('en-US')} examined); Safe Harbor requires ages of 90 and over to be grouped as "90 or older".`,
  };
}

/**
 * The near-unique check: a column with more distinct text values than the level cap, or a
 * code-like column whose share of distinct values is over the threshold, behaves like an
 * identifying code.
 */
function uniquenessFinding(column: ColumnEvidence, options: ScreenOptions): Finding | null {
  const n = column.nonMissing;
  if (column.levelsOverflowed) {
    return {
      column: column.name,
      columnIndex: column.index,
      rule: 'too-many-levels',
      category: 'unique-code',
      matchedCount: column.levelCap,
      examinedCount: n,
      message: `Column "${column.name}": more than ${column.levelCap.toLocaleString('en-US')} distinct text values among ${n.toLocaleString('en-US')}; a column this varied is free text or a code that may identify people, and cannot be analysed as a category.`,
    };
  }
  if (column.codeLike && column.distinct !== null && n >= options.nearUniqueMinValues && column.distinct / n > options.nearUniqueShare) {
    return {
      column: column.name,
      columnIndex: column.index,
      rule: 'near-unique',
      category: 'unique-code',
      matchedCount: column.distinct,
      examinedCount: n,
      message: `Column "${column.name}": ${column.distinct.toLocaleString('en-US')} distinct values among ${n.toLocaleString('en-US')} (over ${Math.round(options.nearUniqueShare * 100)}% unique), so it behaves like an identifying code.`,
    };
  }
  return null;
}

/**
 * Screens one finished column and returns its findings (empty when nothing was found), in
 * this order: the name, the value patterns, ages over 89, near-uniqueness.
 */
export function screenColumn(column: ColumnEvidence, options: ScreenOptions = DEFAULT_SCREEN_OPTIONS): Finding[] {
  const findings = [nameFinding(column), ...patternFindings(column, options), ageFinding(column), uniquenessFinding(column, options)];
  return findings.filter((finding): finding is Finding => finding !== null);
}
