/**
 * The identifier screen's value patterns: each text value is classified once (a mask of
 * {@link PATTERN} bits: SSN, telephone, e-mail, IP address, URL, dates written as text,
 * formatted postal codes, full UK postcodes, NHS numbers, National Insurance numbers) and
 * the counts are kept per column while reading; plain 8-digit numbers are checked as
 * YYYYMMDD dates and plain 10-digit numbers as NHS numbers on their raw bytes. No value is
 * ever kept.
 *
 * Every pattern is counted whatever the privacy regime; which counts refuse a column is
 * the screen's decision (identifierScreen.ts), by regime.
 */

/** Bit flags returned by {@link classifyTextValue}. */
export const PATTERN = {
  ssn: 1,
  phone: 2,
  email: 4,
  ipAddress: 8,
  url: 16,
  date: 32,
  postalCode: 64,
  ukPostcode: 128,
  nhsNumber: 256,
  niNumber: 512,
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
  /** Formatted postal codes other than UK ones: ZIP+4, 5-digit ZIPs written as text, Canadian postcodes. */
  postalCode: number;
  /** Full UK postcodes (outward and inward code, `SW1A 1AA`); an outward code alone (`SW1A`) is not one. */
  ukPostcode: number;
  /** NHS numbers written as text (10 digits, optionally 3-3-4 with spaces or hyphens) whose modulus-11 check digit holds. */
  nhsNumber: number;
  /** National Insurance numbers: two letters (HMRC's excluded letters and prefixes aside), six digits, A to D. */
  niNumber: number;
  /** Plain 5-digit numbers (leading zeros kept): a ZIP code shape. */
  fiveDigitNumbers: number;
  /** Plain 8-digit numbers that are valid YYYYMMDD dates between 1900 and 2099. */
  compactDates: number;
  /** Plain 10-digit numbers whose modulus-11 check digit holds: an NHS number shape. */
  plainNhsNumbers: number;
}

/** A fresh set of zero counts. */
export function emptyPatternCounts(): PatternCounts {
  return {
    ssn: 0, phone: 0, email: 0, ipAddress: 0, url: 0, date: 0, postalCode: 0, ukPostcode: 0, nhsNumber: 0, niNumber: 0,
    fiveDigitNumbers: 0, compactDates: 0, plainNhsNumbers: 0,
  };
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
  if (mask & PATTERN.ukPostcode) counts.ukPostcode += times;
  if (mask & PATTERN.nhsNumber) counts.nhsNumber += times;
  if (mask & PATTERN.niNumber) counts.niNumber += times;
}

const SSN = /(?<![\d-])\d{3}[- ]\d{2}[- ]\d{4}(?![\d-])/;
// North American numbers with separators, optional +1 and parentheses.
const PHONE_NANP = /(?<![\d-])(?:\+?1[\s.-]?)?(?:\(\d{3}\)\s?|\d{3}[\s.-])\d{3}[\s.-]\d{4}(?![\d-])/;
// UK national format: a leading 0, then 9 or 10 further digits in up to three groups
// (01632 960123, 020 7946 0958, 07700 900123); the digit count is checked after the match.
const PHONE_UK = /(?<![\d-])0[1-37-9]\d{1,3}[\s-]?\d{3,4}[\s-]?\d{3,4}(?![\d-])/;
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
const NHS_NUMBER = /^(\d{3})[ -]?(\d{3})[ -]?(\d{4})$/;
// HMRC's National Insurance number format: the first letter is not D, F, I, Q, U or V; the
// second is not D, F, I, O, Q, U or V; the prefixes BG, GB, KN, NK, NT, TN and ZZ are never
// allocated; six digits (often in pairs); a suffix letter A to D.
const NI_NUMBER = /(?<![A-Za-z0-9])(?!BG|GB|KN|NK|NT|TN|ZZ)[A-CEGHJ-PR-TW-Z][A-CEGHJ-NPR-TW-Z]\s?\d{2}\s?\d{2}\s?\d{2}\s?[A-D](?![A-Za-z0-9])/i;

/**
 * Whether ten digits pass the NHS number check: weights 10 down to 2 on the first nine
 * digits, 11 minus the sum modulo 11 is the tenth (11 reads as 0; 10 is never issued).
 * NHS Data Dictionary, "NHS Number".
 */
export function nhsCheckDigitHolds(digits: ArrayLike<number>): boolean {
  let sum = 0;
  for (let k = 0; k < 9; k++) sum += digits[k] * (10 - k);
  const check = 11 - (sum % 11);
  if (check === 10) return false;
  return (check === 11 ? 0 : check) === digits[9];
}

function isNhsNumberText(value: string): boolean {
  const m = NHS_NUMBER.exec(value);
  if (!m) return false;
  const digits = Array.from(m[1] + m[2] + m[3], Number);
  return nhsCheckDigitHolds(digits);
}

function isUkPhone(value: string): boolean {
  const m = PHONE_UK.exec(value);
  if (!m) return false;
  const digits = m[0].replace(/\D/g, '').length;
  return digits === 10 || digits === 11;
}

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
  if (digits >= 7 && (PHONE_NANP.test(value) || PHONE_INTL.test(value) || isUkPhone(value))) mask |= PATTERN.phone;
  if (digits === 10 && value.length <= 12 && isNhsNumberText(value)) mask |= PATTERN.nhsNumber;
  if (letters && digits === 6 && NI_NUMBER.test(value)) mask |= PATTERN.niNumber;
  if (digits >= 4 && dot) {
    const m = IPV4.exec(value);
    if (m && validIpv4(m)) mask |= PATTERN.ipAddress;
  }
  if (colon && hasIpv6(value)) mask |= PATTERN.ipAddress;
  if (digits >= 4 && value.length <= 40 && isDateText(value)) mask |= PATTERN.date;
  if (value.length <= 10 && (ZIP_TEXT.test(value) || (letters && CA_POSTCODE.test(value)))) mask |= PATTERN.postalCode;
  if (letters && value.length <= 8 && UK_POSTCODE.test(value)) mask |= PATTERN.ukPostcode;
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

/** Whether ten ASCII digits at `bytes[start..start+10)` pass the NHS number check. */
export function isNhsNumberDigits(bytes: Uint8Array, start: number): boolean {
  const digits = new Array<number>(10);
  for (let k = 0; k < 10; k++) digits[k] = bytes[start + k] - 48;
  return nhsCheckDigitHolds(digits);
}
