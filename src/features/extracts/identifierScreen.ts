/**
 * Identifier screen, following the deployment's privacy regime (src/lib/privacyRegime.ts):
 * - `us-hipaa`: the detectable HIPAA Safe Harbor categories (45 CFR 164.514(b)(2)(i); HHS
 *   OCR guidance on de-identification, 2012): SSNs, ZIP codes (formatted, or plain 5-digit
 *   numbers making up half a column) and every other postal code, besides the common rules;
 * - `uk`: the ICO's anonymisation guidance and the NHS's data security wording: NHS numbers
 *   (modulus-11 check digit; formatted ones on one value, plain 10-digit numbers when half
 *   the column passes the check), National Insurance numbers and full postcodes, besides
 *   the common rules;
 * - `generic`: the common rules alone, with formatted postal codes of any country.
 * The common rules: column names, telephone numbers, e-mail, IP and web addresses, full
 * dates (dates of birth among them), ages over 89 in an age column, near-unique codes.
 *
 * Two kinds of evidence, both gathered on the streaming path:
 * - column names, split into lower-case words (`PatientDOB` -> `patient dob`), matched
 *   against word lists per category;
 * - value patterns. Text values are classified once per distinct value as the dictionary
 *   learns it, and the value's count is added, so every value of the column is examined
 *   (no sampling); beyond the level cap each further text value is classified as it
 *   passes. Plain numbers are checked on their raw digits while parsing (5-digit ZIP codes
 *   keep their leading zeros; 8-digit YYYYMMDD dates; 10-digit NHS numbers with their check
 *   digit), and age values at the end.
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
import { privacyRegimeText, type PrivacyRegime } from '@/lib/privacyRegime';
import { isAgeColumnName, screenColumnName } from './columnNameRules';
import type { Finding, FindingRule, IdentifierCategory } from './identifierFindings';
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

/** The regime and thresholds of the screen. */
export interface ScreenOptions {
  /** Whose rules apply; the server passes the deployment's setting. */
  regime: PrivacyRegime;
  /** Share of distinct non-missing values above which a code-like column is near-unique. Default 0.9. */
  nearUniqueShare: number;
  /** Fewest non-missing values for the near-unique rule. Default 50. */
  nearUniqueMinValues: number;
  /** Share of plain 5-digit numbers that makes a column look like ZIP codes. Default 0.5. */
  zipShare: number;
  /** Share of plain 8-digit YYYYMMDD numbers that makes a column look like dates. Default 0.5. */
  compactDateShare: number;
  /** Share of plain 10-digit numbers passing the NHS check that makes a column look like NHS numbers (UK). Default 0.5. */
  nhsShare: number;
}

/** Default thresholds of {@link ScreenOptions}; the regime is always the caller's. */
export const DEFAULT_SCREEN_OPTIONS: Omit<ScreenOptions, 'regime'> = {
  nearUniqueShare: 0.9,
  nearUniqueMinValues: 50,
  zipShare: 0.5,
  compactDateShare: 0.5,
  nhsShare: 0.5,
};

/** Counts as the product writes them (1,234). */
const count = (n: number): string => n.toLocaleString('en-GB');

function plural(n: number, one: string, many: string): string {
  return `${count(n)} ${n === 1 ? one : many}`;
}

function valueFinding(
  column: ColumnEvidence,
  regime: PrivacyRegime,
  rule: FindingRule,
  category: IdentifierCategory,
  matched: number,
  what: string,
): Finding {
  return {
    regime,
    column: column.name,
    columnIndex: column.index,
    rule,
    category,
    matchedCount: matched,
    examinedCount: column.nonMissing,
    message: `Column "${column.name}": ${plural(matched, 'value', 'values')} of ${count(column.nonMissing)} examined ${matched === 1 ? 'looks' : 'look'} like ${what}.`,
  };
}

/** The column's name points at an identifier category. */
function nameFinding(column: ColumnEvidence, regime: PrivacyRegime): Finding | null {
  const named = screenColumnName(column.name, regime);
  if (named === null) return null;
  return {
    regime,
    column: column.name,
    columnIndex: column.index,
    rule: 'column-name',
    category: named.category,
    matchedCount: null,
    examinedCount: null,
    message: `Column "${column.name}": its name suggests ${named.label}, ${privacyRegimeText(regime).identifierNoun}.`,
  };
}

/**
 * Findings from the value patterns, by regime. Strong patterns (SSN, NHS and National
 * Insurance numbers, phone, e-mail, IP, URL, formatted dates and postcodes) refuse on a
 * single value; plain 5-, 8- and 10-digit numbers only when they make up the given share.
 */
function patternFindings(column: ColumnEvidence, options: ScreenOptions): Finding[] {
  const { regime } = options;
  const findings: Finding[] = [];
  const p = column.patterns;
  const n = column.nonMissing;
  const add = (rule: FindingRule, category: IdentifierCategory, matched: number, what: string): void => {
    if (matched > 0) findings.push(valueFinding(column, regime, rule, category, matched, what));
  };
  const share = (matched: number, threshold: number): number => (n > 0 && matched / n >= threshold ? matched : 0);
  if (regime === 'us-hipaa') add('ssn-pattern', 'ssn', p.ssn, 'social security numbers');
  if (regime === 'uk') {
    add('nhs-number-pattern', 'nhs-number', p.nhsNumber + share(p.plainNhsNumbers, options.nhsShare), 'NHS numbers (their check digit holds)');
    add('ni-number-pattern', 'national-insurance-number', p.niNumber, 'National Insurance numbers');
  }
  add('phone-pattern', 'phone', p.phone, 'telephone or fax numbers');
  add('email-pattern', 'email', p.email, 'e-mail addresses');
  add('ip-address-pattern', 'ip-address', p.ipAddress, 'IP addresses');
  add('url-pattern', 'url', p.url, 'web addresses (URLs)');
  add('date-pattern', 'dates', p.date + share(p.compactDates, options.compactDateShare), 'dates with a day or month');
  if (regime === 'us-hipaa') {
    add('postal-code-pattern', 'geography', p.postalCode + p.ukPostcode + share(p.fiveDigitNumbers, options.zipShare), 'ZIP or postal codes');
  } else if (regime === 'uk') {
    add('postal-code-pattern', 'geography', p.ukPostcode, 'full postcodes');
  } else {
    add('postal-code-pattern', 'geography', p.postalCode + p.ukPostcode, 'postal codes');
  }
  return findings;
}

/** Ages over 89 in a column whose name says it holds ages. */
function ageFinding(column: ColumnEvidence, regime: PrivacyRegime): Finding | null {
  if (column.numericValues === null || !isAgeColumnName(column.name)) return null;
  const values = column.numericValues;
  let over = 0;
  for (let i = 0; i < column.rowCount; i++) if (values[i] > 89) over++;
  if (over === 0) return null;
  const rule =
    regime === 'us-hipaa'
      ? 'Safe Harbor requires ages of 90 and over to be grouped as "90 or older"'
      : 'ages this high are rare enough to single people out; group ages of 90 and over as "90 or older"';
  return {
    ...valueFinding(column, regime, 'age-over-89', 'age-over-89', over, 'ages over 89'),
    message: `Column "${column.name}": ${plural(over, 'age is', 'ages are')} over 89 (of ${count(column.nonMissing)} examined); ${rule}.`,
  };
}

/**
 * The near-unique check: a column with more distinct text values than the level cap, or a
 * code-like column whose share of distinct values is over the threshold, behaves like an
 * identifying code.
 */
function uniquenessFinding(column: ColumnEvidence, options: ScreenOptions): Finding | null {
  const n = column.nonMissing;
  const { regime } = options;
  if (column.levelsOverflowed) {
    return {
      regime,
      column: column.name,
      columnIndex: column.index,
      rule: 'too-many-levels',
      category: 'unique-code',
      matchedCount: column.levelCap,
      examinedCount: n,
      message: `Column "${column.name}": more than ${count(column.levelCap)} distinct text values among ${count(n)}; a column this varied is free text or a code that may identify people, and cannot be analysed as a category.`,
    };
  }
  if (column.codeLike && column.distinct !== null && n >= options.nearUniqueMinValues && column.distinct / n > options.nearUniqueShare) {
    return {
      regime,
      column: column.name,
      columnIndex: column.index,
      rule: 'near-unique',
      category: 'unique-code',
      matchedCount: column.distinct,
      examinedCount: n,
      message: `Column "${column.name}": ${count(column.distinct)} distinct values among ${count(n)} (over ${Math.round(options.nearUniqueShare * 100)}% unique), so it behaves like an identifying code.`,
    };
  }
  return null;
}

/**
 * Screens one finished column under the regime of `options` and returns its findings
 * (empty when nothing was found), in this order: the name, the value patterns, ages over
 * 89, near-uniqueness. Each finding names the regime.
 */
export function screenColumn(column: ColumnEvidence, options: Pick<ScreenOptions, 'regime'> & Partial<ScreenOptions>): Finding[] {
  const all: ScreenOptions = { ...DEFAULT_SCREEN_OPTIONS, ...options };
  const findings = [nameFinding(column, all.regime), ...patternFindings(column, all), ageFinding(column, all.regime), uniquenessFinding(column, all)];
  return findings.filter((finding): finding is Finding => finding !== null);
}
