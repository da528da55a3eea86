/** Reading a decimal number straight from a field's bytes, for the column builders. */

const POW10 = [1, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9, 1e10, 1e11, 1e12, 1e13, 1e14, 1e15, 1e16, 1e17, 1e18, 1e19, 1e20, 1e21, 1e22];

/**
 * Side results of the last {@link parseNumber} call that returned a number, kept in one
 * module-level object so the hot path allocates nothing: `decimals` (-1 after an exponent
 * or over 15 digits) and `plainDigits` (only digits, no sign or point).
 */
export const lastParse = { decimals: 0, plainDigits: false };

/**
 * Parses `bytes[start..end)` as a decimal number, or returns NaN when it is not one.
 * Up to 15 significant digits the value is `mantissa / 10^decimals`, which is correctly
 * rounded because both operands are exact doubles (Clinger, "How to read floating point
 * numbers accurately", PLDI 1990, the fast path); longer numbers and exponents go through
 * `Number()`, which is correctly rounded too. Sets {@link lastParse}.
 */
export function parseNumber(bytes: Uint8Array, start: number, end: number, decimalByte: number): number {
  let i = start;
  let negative = false;
  let c = bytes[i];
  if (c === 45) {
    negative = true;
    i++;
  } else if (c === 43) i++;
  let mantissa = 0;
  let digits = 0;
  let decimals = 0;
  let sawPoint = false;
  for (; i < end; i++) {
    c = bytes[i];
    const d = c - 48;
    if (d >= 0 && d <= 9) {
      mantissa = mantissa * 10 + d;
      digits++;
      if (sawPoint) decimals++;
    } else if (c === decimalByte && !sawPoint) sawPoint = true;
    else break;
  }
  if (digits === 0) return NaN;
  if (i === end && digits <= 15) {
    lastParse.decimals = decimals;
    lastParse.plainDigits = !sawPoint && start === end - digits;
    const magnitude = decimals === 0 ? mantissa : mantissa / POW10[decimals];
    return negative ? -magnitude : magnitude;
  }
  if (i < end) {
    // Only an exponent may follow: e or E, optional sign, at least one digit.
    if (c !== 101 && c !== 69) return NaN;
    i++;
    if (i < end && (bytes[i] === 43 || bytes[i] === 45)) i++;
    if (i === end) return NaN;
    for (; i < end; i++) {
      const d = bytes[i] - 48;
      if (d < 0 || d > 9) return NaN;
    }
  }
  let text = '';
  for (let k = start; k < end; k++) text += bytes[k] === decimalByte ? '.' : String.fromCharCode(bytes[k]);
  lastParse.decimals = -1;
  lastParse.plainDigits = false;
  return Number(text);
}
