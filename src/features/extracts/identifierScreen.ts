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
 */

/** Safe Harbor categories the screen can recognise (plus ages over 89, a separate rule). */
export type SafeHarborCategory =
  | 'names'
  | 'geography'
  | 'dates'
  | 'phone'
  | 'fax'
  | 'email'
  | 'ssn'
  | 'medical-record-number'
  | 'health-plan-number'
  | 'account-number'
  | 'certificate-or-licence-number'
  | 'vehicle-identifier'
  | 'device-identifier'
  | 'url'
  | 'ip-address'
  | 'biometric'
  | 'face-image'
  | 'unique-code'
  | 'age-over-89';

/** Stable rule codes of the screen. */
export type FindingRule =
  | 'column-name'
  | 'ssn-pattern'
  | 'phone-pattern'
  | 'email-pattern'
  | 'ip-address-pattern'
  | 'url-pattern'
  | 'date-pattern'
  | 'postal-code-pattern'
  | 'age-over-89'
  | 'near-unique'
  | 'too-many-levels';

/** One reason to refuse a column. */
export interface Finding {
  /** Column name as written in the header. */
  column: string;
  /** 0-based position in the header. */
  columnIndex: number;
  rule: FindingRule;
  category: SafeHarborCategory;
  /** Values that matched the rule (null for rules about the name). */
  matchedCount: number | null;
  /** Non-missing values the rule examined (null for rules about the name). */
  examinedCount: number | null;
  /** Plain-English explanation; contains counts, never values. */
  message: string;
}

// ---- value patterns ---------------------------------------------------------------------

/** Bit flags returned by {@link classifyTextValue}. */
export const PATTERN = {
  ssn: 1,
  phone: 2,
  email: 4,
  ipAddress: 8,
  url: 16,
  date: 32,
  postalCode: 64,
} as const;

/** Pattern name -> count of values that matched it, gathered per column while reading. */
export interface PatternCounts {
  ssn: number;
  phone: number;
  email: number;
  ipAddress: number;
  url: number;
  /** Text dates (ISO, d/m/y, m/d/y, month names, date-times, month-year). */
  date: number;
  /** Formatted postal codes: ZIP+4, UK and Canadian postcodes, 5-digit ZIPs written as text. */
  postalCode: number;
  /** Plain 5-digit numbers (leading zeros kept): a ZIP code shape. */
  fiveDigitNumbers: number;
  /** Plain 8-digit numbers that are valid YYYYMMDD dates between 1900 and 2099. */
  compactDates: number;
}

/** A fresh set of zero counts. */
export function emptyPatternCounts(): PatternCounts {
  return { ssn: 0, phone: 0, email: 0, ipAddress: 0, url: 0, date: 0, postalCode: 0, fiveDigitNumbers: 0, compactDates: 0 };
}

/** Adds `times` to every count whose bit is set in `mask`. */
export function addPatternMask(counts: PatternCounts, mask: number, times: number): void {
  if (mask === 0) return;
  if (mask & PATTERN.ssn) counts.ssn += times;
  if (mask & PATTERN.phone) counts.phone += times;
  if (mask & PATTERN.email) counts.email += times;
  if (mask & PATTERN.ipAddress) counts.ipAddress += times;
  if (mask & PATTERN.url) counts.url += times;
  if (mask & PATTERN.date) counts.date += times;
  if (mask & PATTERN.postalCode) counts.postalCode += times;
}

const SSN = /(?<![\d-])\d{3}[- ]\d{2}[- ]\d{4}(?![\d-])/;
// North American numbers with separators, optional +1 and parentheses.
const PHONE_NANP = /(?<![\d-])(?:\+?1[\s.-]?)?(?:\(\d{3}\)\s?|\d{3}[\s.-])\d{3}[\s.-]\d{4}(?![\d-])/;
// International format with a leading +: country code and 6 to 14 further digits in groups.
const PHONE_INTL = /(?<!\w)\+\d{1,3}(?:[\s.-]?\(?\d{1,5}\)?){2,6}(?!\d)/;
const EMAIL = /[A-Za-z0-9._%+-]+@[A-Za-z0-9-]+(?:\.[A-Za-z0-9-]+)*\.[A-Za-z]{2,}/;
const URL = /\b(?:https?|ftp):\/\/[^\s]+|\bwww\.[A-Za-z0-9-]+\.[A-Za-z]{2,}/i;
const IPV4 = /(?<![\d.])(\d{1,3})\.(\d{1,3})\.(\d{1,3})\.(\d{1,3})(?![\d.])/;
const IPV6_CANDIDATE = /(?<![0-9A-Fa-f:])[0-9A-Fa-f]{0,4}(?::[0-9A-Fa-f]{0,4}){2,7}(?![0-9A-Fa-f:])/g;

const MONTH = '(?:jan(?:uary)?|feb(?:ruary)?|mar(?:ch)?|apr(?:il)?|may|june?|july?|aug(?:ust)?|sep(?:t(?:ember)?)?|oct(?:ober)?|nov(?:ember)?|dec(?:ember)?)';
const TIME = '(?:[T ]\\d{1,2}:\\d{2}(?::\\d{2}(?:\\.\\d+)?)?(?:\\s?[AaPp][Mm])?(?:Z|[+-]\\d{2}:?\\d{2})?)?';
const DATE_YMD = new RegExp(`^(\\d{4})[-/.](\\d{1,2})[-/.](\\d{1,2})${TIME}$`);
const DATE_DMY = new RegExp(`^(\\d{1,2})[-/.](\\d{1,2})[-/.](\\d{4}|\\d{2})${TIME}$`);
const DATE_NAMED_DMY = new RegExp(`^\\d{1,2}(?:st|nd|rd|th)?[\\s-]${MONTH}\\.?[\\s,-]+\\d{2,4}${TIME}$`, 'i');
const DATE_NAMED_MDY = new RegExp(`^(?:[a-z]+,?\\s)?${MONTH}\\.?\\s\\d{1,2}(?:st|nd|rd|th)?,?\\s\\d{4}${TIME}$`, 'i');
const MONTH_YEAR = new RegExp(`^(?:(\\d{4})[-/](\\d{1,2})|(\\d{1,2})[-/](\\d{4})|${MONTH}\\.?[\\s-]\\d{4})$`, 'i');
const ZIP_TEXT = /^\d{5}(?:-\d{4})?$/;
const UK_POSTCODE = /^[A-Z]{1,2}\d[A-Z\d]?\s?\d[A-Z]{2}$/i;
const CA_POSTCODE = /^[ABCEGHJ-NPRSTVXY]\d[A-Z]\s?\d[A-Z]\d$/i;

function validIpv4(match: RegExpExecArray): boolean {
  for (let k = 1; k <= 4; k++) {
    const part = match[k];
    if (Number(part) > 255 || (part.length > 1 && part[0] === '0')) return false;
  }
  return true;
}

function hasIpv6(value: string): boolean {
  IPV6_CANDIDATE.lastIndex = 0;
  for (let m = IPV6_CANDIDATE.exec(value); m !== null; m = IPV6_CANDIDATE.exec(value)) {
    const text = m[0];
    const compressed = text.split('::').length - 1;
    if (compressed > 1) continue;
    const groups = text.split(':').filter((g) => g !== '');
    // Without "::" an address has exactly 8 groups (this also rules out times like 10:30:00).
    if (compressed === 0 ? groups.length === 8 : groups.length >= 1 && groups.length <= 7) {
      if (compressed === 1 && groups.length < 2 && !/[a-f]/i.test(text)) continue;
      return true;
    }
  }
  return false;
}

function validDayMonth(day: number, month: number): boolean {
  return month >= 1 && month <= 12 && day >= 1 && day <= 31;
}

function isDateText(value: string): boolean {
  let m = DATE_YMD.exec(value);
  if (m) return validDayMonth(Number(m[3]), Number(m[2]));
  m = DATE_DMY.exec(value);
  if (m) {
    const a = Number(m[1]);
    const b = Number(m[2]);
    // Day-first or month-first: either reading must be a real date.
    return validDayMonth(a, b) || validDayMonth(b, a);
  }
  if (DATE_NAMED_DMY.test(value) || DATE_NAMED_MDY.test(value)) return true;
  m = MONTH_YEAR.exec(value);
  if (m) {
    if (m[1] !== undefined) return Number(m[2]) >= 1 && Number(m[2]) <= 12 && Number(m[1]) >= 1800;
    if (m[3] !== undefined) return Number(m[3]) >= 1 && Number(m[3]) <= 12 && Number(m[4]) >= 1800;
    return true;
  }
  return false;
}

/**
 * Classifies one text value (already trimmed) and returns a mask of {@link PATTERN}
 * bits. Cheap character tests come first so that ordinary category labels cost little.
 */
export function classifyTextValue(value: string): number {
  if (value.length < 4) return 0;
  let digits = 0;
  let at = false;
  let colon = false;
  let dot = false;
  let letters = false;
  for (let i = 0; i < value.length; i++) {
    const c = value.charCodeAt(i);
    if (c >= 48 && c <= 57) digits++;
    else if (c === 64) at = true;
    else if (c === 58) colon = true;
    else if (c === 46) dot = true;
    else if ((c >= 65 && c <= 90) || (c >= 97 && c <= 122)) letters = true;
  }
  let mask = 0;
  if (at && EMAIL.test(value)) mask |= PATTERN.email;
  if (letters && URL.test(value)) mask |= PATTERN.url;
  if (digits >= 9 && SSN.test(value)) mask |= PATTERN.ssn;
  if (digits >= 7 && (PHONE_NANP.test(value) || PHONE_INTL.test(value))) mask |= PATTERN.phone;
  if (digits >= 4 && dot) {
    const m = IPV4.exec(value);
    if (m && validIpv4(m)) mask |= PATTERN.ipAddress;
  }
  if (colon && hasIpv6(value)) mask |= PATTERN.ipAddress;
  if (digits >= 4 && value.length <= 40 && isDateText(value)) mask |= PATTERN.date;
  if (value.length <= 10 && (ZIP_TEXT.test(value) || (letters && (UK_POSTCODE.test(value) || CA_POSTCODE.test(value))))) {
    mask |= PATTERN.postalCode;
  }
  return mask;
}

const DAYS_IN_MONTH = [31, 29, 31, 30, 31, 30, 31, 31, 30, 31, 30, 31];

/**
 * Whether eight ASCII digits at `bytes[start..start+8)` read as a valid YYYYMMDD date
 * between 1900-01-01 and 2099-12-31 (29 February accepted in any year).
 */
export function isCompactDate(bytes: Uint8Array, start: number): boolean {
  const year = (bytes[start] - 48) * 1000 + (bytes[start + 1] - 48) * 100 + (bytes[start + 2] - 48) * 10 + (bytes[start + 3] - 48);
  if (year < 1900 || year > 2099) return false;
  const month = (bytes[start + 4] - 48) * 10 + (bytes[start + 5] - 48);
  if (month < 1 || month > 12) return false;
  const day = (bytes[start + 6] - 48) * 10 + (bytes[start + 7] - 48);
  return day >= 1 && day <= DAYS_IN_MONTH[month - 1];
}

// ---- column names -------------------------------------------------------------------------

/**
 * Splits a column name into lower-case words: `PatientDOB` -> `patient dob`,
 * `e-mail_address` -> `e mail address`, `zip5` -> `zip 5`.
 */
export function columnNameWords(name: string): string[] {
  return name
    .replace(/([a-z])([A-Z])/g, '$1 $2')
    .replace(/([A-Z]+)([A-Z][a-z])/g, '$1 $2')
    .replace(/([A-Za-z])(\d)/g, '$1 $2')
    .replace(/(\d)([A-Za-z])/g, '$1 $2')
    .toLowerCase()
    .split(/[^a-z0-9]+/)
    .filter((w) => w !== '');
}

interface NameRule {
  category: SafeHarborCategory;
  /** Single words that flag the column wherever they appear. */
  words?: readonly string[];
  /** Word sequences that flag the column when they appear consecutively. */
  phrases?: readonly (readonly string[])[];
  /** Whole names (after joining the words with nothing) that flag the column. */
  whole?: readonly string[];
  label: string;
}

// Words that make "name" mean the name of a thing rather than a person.
const THING_QUALIFIERS = new Set([
  'site', 'hospital', 'ward', 'unit', 'drug', 'procedure', 'diagnosis', 'facility', 'department',
  'dept', 'program', 'programme', 'initiative', 'file', 'column', 'variable', 'test', 'lab', 'med',
  'medication', 'org', 'organisation', 'organization', 'practice', 'clinic', 'team', 'service',
  'specialty', 'insurer', 'payer', 'plan', 'product', 'device', 'code', 'group', 'category', 'region',
  'trust', 'country', 'state', 'arm', 'intervention', 'outcome', 'study', 'trial', 'protocol',
]);

// Order matters where words overlap: "ip address" and "email address" are not street addresses,
// "licence plate" is a vehicle and "licence number" a licence.
const NAME_RULES: readonly NameRule[] = [
  {
    category: 'names',
    label: "people's names",
    words: ['surname', 'forename', 'firstname', 'lastname', 'fullname', 'givenname', 'familyname', 'fname', 'lname', 'initials', 'maiden', 'nickname'],
    phrases: [['first', 'name'], ['last', 'name'], ['given', 'name'], ['family', 'name'], ['middle', 'name'], ['full', 'name'], ['maiden', 'name']],
    whole: ['name', 'first', 'last', 'names', 'patient', 'patientname'],
  },
  { category: 'email', label: 'e-mail addresses', words: ['email', 'emails', 'emailaddress'], phrases: [['e', 'mail']] },
  // A bare "ip" often means inpatient in hospital data, so only the whole name or "ip address".
  { category: 'ip-address', label: 'IP addresses', words: ['ipv4', 'ipv6', 'ipaddress'], whole: ['ip'], phrases: [['ip', 'address'], ['ip', 'addr']] },
  {
    category: 'device-identifier',
    label: 'device identifiers or serial numbers',
    words: ['serial', 'imei', 'udi', 'deviceid'],
    phrases: [['device', 'id'], ['device', 'identifier'], ['device', 'number'], ['device', 'serial'], ['mac', 'address']],
  },
  { category: 'url', label: 'web addresses (URLs)', words: ['url', 'urls', 'uri', 'website', 'webpage', 'homepage', 'link'], phrases: [['web', 'address']] },
  {
    category: 'geography',
    label: 'geographic units smaller than a state (addresses, ZIP or postal codes)',
    words: ['zip', 'zipcode', 'postcode', 'postal', 'postalcode', 'address', 'addr', 'street', 'city', 'town', 'county', 'latitude', 'longitude', 'lat', 'lng', 'lon', 'geocode', 'tract', 'suburb', 'village'],
    phrases: [['post', 'code'], ['census', 'block']],
  },
  {
    category: 'dates',
    label: 'dates (all date elements but the year)',
    words: ['dob', 'dod', 'date', 'dates', 'dt', 'datetime', 'timestamp', 'birthdate', 'birthday', 'month', 'dateofbirth'],
    phrases: [['birth', 'date'], ['date', 'of', 'birth'], ['date', 'of', 'death'], ['birth', 'month'], ['birth', 'day']],
  },
  { category: 'phone', label: 'telephone numbers', words: ['phone', 'telephone', 'tel', 'mobile', 'cellphone', 'phonenumber'] },
  { category: 'fax', label: 'fax numbers', words: ['fax', 'facsimile'] },
  {
    category: 'ssn',
    label: 'social security or national insurance numbers',
    words: ['ssn', 'ssns', 'socsec', 'nino'],
    phrases: [['social', 'security'], ['national', 'insurance'], ['social', 'insurance']],
  },
  {
    category: 'medical-record-number',
    label: 'medical record or patient numbers',
    words: ['mrn', 'mrns', 'emrn', 'patientid', 'nhsnumber'],
    phrases: [['medical', 'record'], ['patient', 'id'], ['patient', 'number'], ['hospital', 'number'], ['chart', 'number'], ['nhs', 'number'], ['person', 'id'], ['record', 'number'], ['unit', 'number'], ['health', 'record']],
  },
  {
    category: 'health-plan-number',
    label: 'health-plan beneficiary numbers',
    words: ['medicaid', 'hicn', 'mbi', 'beneficiary', 'subscriber'],
    phrases: [['health', 'plan'], ['insurance', 'number'], ['insurance', 'id'], ['member', 'id'], ['member', 'number'], ['policy', 'number'], ['medicare', 'number'], ['medicare', 'id']],
  },
  { category: 'account-number', label: 'account numbers', words: ['account', 'accounts', 'acct', 'iban'], phrases: [['billing', 'number'], ['invoice', 'number']] },
  {
    category: 'vehicle-identifier',
    label: 'vehicle identifiers (licence plates, VINs)',
    words: ['vin', 'plate', 'numberplate'],
    phrases: [['licence', 'plate'], ['license', 'plate'], ['vehicle', 'id'], ['vehicle', 'identifier'], ['vehicle', 'number'], ['vehicle', 'registration']],
  },
  {
    category: 'certificate-or-licence-number',
    label: 'certificate or licence numbers',
    words: ['licence', 'license', 'certificate', 'passport', 'npi', 'dea'],
    phrases: [['driver', 'licence'], ['drivers', 'license']],
  },
  { category: 'biometric', label: 'biometric identifiers', words: ['fingerprint', 'fingerprints', 'biometric', 'biometrics', 'retina', 'iris', 'voiceprint'] },
  { category: 'face-image', label: 'photographs or face images', words: ['photo', 'photograph', 'photos', 'image', 'images', 'picture', 'portrait', 'selfie'], phrases: [['face', 'image']] },
  { category: 'unique-code', label: 'unique identifying codes', words: ['uuid', 'guid'] },
];

function containsPhrase(words: readonly string[], phrase: readonly string[]): boolean {
  outer: for (let i = 0; i + phrase.length <= words.length; i++) {
    for (let k = 0; k < phrase.length; k++) if (words[i + k] !== phrase[k]) continue outer;
    return true;
  }
  return false;
}

/** Whether a column's name says it holds ages (so values over 89 are identifying). */
export function isAgeColumnName(name: string): boolean {
  const words = columnNameWords(name);
  return words.includes('age') || words.includes('ages') || /^age(at|in|years|yrs)/.test(words.join(''));
}

/**
 * The Safe Harbor category a column's name points at, or null. A person's-name rule is
 * not triggered by names of things (`site_name`, `ward_name`).
 */
export function screenColumnName(name: string): { category: SafeHarborCategory; label: string } | null {
  const words = columnNameWords(name);
  if (words.length === 0) return null;
  const joined = words.join('');
  for (const rule of NAME_RULES) {
    let hit = false;
    if (rule.whole?.includes(joined)) hit = true;
    if (!hit && rule.words?.some((w) => words.includes(w) || joined === w)) hit = true;
    if (!hit && rule.phrases?.some((p) => containsPhrase(words, p))) hit = true;
    if (!hit && rule.category === 'names') {
      // "name" next to a word that is not a thing: patient_name, nok_name, name_of_patient.
      const at = words.indexOf('name');
      if (at >= 0 && !words.some((w) => THING_QUALIFIERS.has(w))) hit = true;
    }
    if (hit) return { category: rule.category, label: rule.label };
  }
  return null;
}

// ---- the screen -------------------------------------------------------------------------

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

/**
 * Screens one finished column and returns its findings (empty when nothing was found).
 * Strong patterns (SSN, phone, e-mail, IP, URL, formatted dates and postcodes) refuse on a
 * single value; plain 5-digit and 8-digit numbers only when they make up the given share.
 */
export function screenColumn(column: ColumnEvidence, options: ScreenOptions = DEFAULT_SCREEN_OPTIONS): Finding[] {
  const findings: Finding[] = [];
  const named = screenColumnName(column.name);
  if (named !== null) {
    findings.push({
      column: column.name,
      columnIndex: column.index,
      rule: 'column-name',
      category: named.category,
      matchedCount: null,
      examinedCount: null,
      message: `Column "${column.name}": its name suggests ${named.label}, a Safe Harbor identifier.`,
    });
  }
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
  if (column.numericValues !== null && isAgeColumnName(column.name)) {
    const values = column.numericValues;
    let over = 0;
    for (let i = 0; i < column.rowCount; i++) if (values[i] > 89) over++;
    if (over > 0) {
      findings.push({
        ...valueFinding(column, 'age-over-89', 'age-over-89', over, 'ages over 89'),
        message: `Column "${column.name}": ${plural(over, 'age is', 'ages are')} over 89 (of ${n.toLocaleString('en-US')} examined); Safe Harbor requires ages of 90 and over to be grouped as "90 or older".`,
      });
    }
  }
  if (column.levelsOverflowed) {
    findings.push({
      column: column.name,
      columnIndex: column.index,
      rule: 'too-many-levels',
      category: 'unique-code',
      matchedCount: column.levelCap,
      examinedCount: n,
      message: `Column "${column.name}": more than ${column.levelCap.toLocaleString('en-US')} distinct text values among ${n.toLocaleString('en-US')}; a column this varied is free text or a code that may identify people, and cannot be analysed as a category.`,
    });
  } else if (
    column.codeLike &&
    column.distinct !== null &&
    n >= options.nearUniqueMinValues &&
    column.distinct / n > options.nearUniqueShare
  ) {
    findings.push({
      column: column.name,
      columnIndex: column.index,
      rule: 'near-unique',
      category: 'unique-code',
      matchedCount: column.distinct,
      examinedCount: n,
      message: `Column "${column.name}": ${column.distinct.toLocaleString('en-US')} distinct values among ${n.toLocaleString('en-US')} (over ${Math.round(options.nearUniqueShare * 100)}% unique), so it behaves like an identifying code.`,
    });
  }
  return findings;
}

/** One refusal message per column, joining that column's findings. */
export interface ColumnRefusal {
  column: string;
  columnIndex: number;
  rules: FindingRule[];
  categories: SafeHarborCategory[];
  message: string;
}

/**
 * Groups findings by column (in column order) into one message each, as the upload page
 * and the refusal record show them.
 */
export function refusalsByColumn(findings: readonly Finding[]): ColumnRefusal[] {
  const byColumn = new Map<number, Finding[]>();
  for (const f of findings) {
    const list = byColumn.get(f.columnIndex);
    if (list) list.push(f);
    else byColumn.set(f.columnIndex, [f]);
  }
  return [...byColumn.entries()]
    .sort((a, b) => a[0] - b[0])
    .map(([columnIndex, list]) => {
      const column = list[0].column;
      const reasons = list.map((f) => f.message.replace(`Column "${column}": `, '').replace(/\.$/, ''));
      return {
        column,
        columnIndex,
        rules: list.map((f) => f.rule),
        categories: [...new Set(list.map((f) => f.category))],
        message: `Column "${column}" may identify people: ${reasons.join('; ')}. Remove the column (or drop it while uploading) and upload again.`,
      };
    });
}
