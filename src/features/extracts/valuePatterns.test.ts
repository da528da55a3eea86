import { describe, expect, it } from 'vitest';
import { classifyTextValue, isCompactDate, isNhsNumberDigits, nhsCheckDigitHolds, PATTERN } from './valuePatterns';

// Example values use ranges reserved for documentation or never issued: e-mail domains of
// RFC 2606, IPv4 TEST-NET-1 (RFC 5737), IPv6 2001:db8::/32 (RFC 3849), the fictional
// NANP 555-01xx numbers, and SSN area numbers 900-999, which the SSA never assigns; UK
// telephone numbers from Ofcom's drama ranges (01632 960xxx, 07700 900xxx, 020 7946 0xxx);
// the NHS number 943 476 5919 that NHS Digital publishes as its example; National
// Insurance numbers with invented digits.

describe('value patterns', () => {
  it.each([
    ['person.one@example.org', PATTERN.email],
    ['write to ward.clerk@example.com today', PATTERN.email],
    ['900-12-3456', PATTERN.ssn],
    ['(212) 555-0123', PATTERN.phone],
    ['212-555-0123', PATTERN.phone],
    ['+1 212 555 0123', PATTERN.phone],
    ['+44 20 7946 0958', PATTERN.phone],
    ['192.0.2.17', PATTERN.ipAddress],
    ['2001:db8::ff00:42:8329', PATTERN.ipAddress],
    ['2001:0db8:0000:0000:0000:ff00:0042:8329', PATTERN.ipAddress],
    ['https://example.org/patient/17', PATTERN.url],
    ['www.example.org', PATTERN.url],
    ['2024-03-05', PATTERN.date],
    ['2024-03-05T14:30:00Z', PATTERN.date],
    ['05/03/2024', PATTERN.date],
    ['3/5/24', PATTERN.date],
    ['12.11.2023', PATTERN.date],
    ['5 Mar 2024', PATTERN.date],
    ['March 5, 2024', PATTERN.date],
    ['2024-03', PATTERN.date],
    ['02139-4307', PATTERN.postalCode],
    ['SW1A 1AA', PATTERN.ukPostcode],
    ['ls11ab', PATTERN.ukPostcode],
    ['01632 960123', PATTERN.phone],
    ['07700 900123', PATTERN.phone],
    ['020 7946 0958', PATTERN.phone],
    ['943 476 5919', PATTERN.nhsNumber],
    ['943-476-5919', PATTERN.nhsNumber],
    ['9434765919', PATTERN.nhsNumber],
    ['AB 12 34 56 C', PATTERN.niNumber],
    ['ce123456d', PATTERN.niNumber],
    ['K1A 0B1', PATTERN.postalCode],
  ])('recognises %s', (value, bit) => {
    expect(classifyTextValue(value) & bit).toBe(bit);
  });

  it.each([
    '18-44', '45-64', '80+', 'F', 'Ward-12', 'TVG', 'Tern Valley General', '10:30:00', '14:30', '3.5', 'stage 2',
    '2019-20', '1.2.3', 'none', 'call-back', 'A&E', '2024', '13/13/2024', '4-6 h', 'v2.10.3.1000',
    // A postcode district alone is not a full postcode.
    'SW1A', 'LS1',
  ])('does not flag the ordinary value %s', (value) => {
    expect(classifyTextValue(value)).toBe(0);
  });

  // The modulus-11 check of the NHS Data Dictionary ("NHS Number"): weights 10..2 on the
  // first nine digits; 11 minus the sum mod 11 is the check digit (11 -> 0, 10 never issued).
  // 943476591: 9*10+4*9+3*8+4*7+7*6+6*5+5*4+9*3+1*2 = 299, 299 mod 11 = 2, check 9 (by hand).
  it('checks the NHS number check digit', () => {
    const digits = (text: string) => Array.from(text, Number);
    expect(nhsCheckDigitHolds(digits('9434765919'))).toBe(true);
    expect(nhsCheckDigitHolds(digits('9434765918'))).toBe(false);
    // 401023213: 4*10+1*8+2*6+3*5+2*4+1*3+3*2 = 92, 92 mod 11 = 4, check 7 (by hand).
    expect(nhsCheckDigitHolds(digits('4010232137'))).toBe(true);
    // 400000008: sum 4*10 + 8*2 = 56, 56 mod 11 = 1, check 10: never issued (by hand).
    for (let last = 0; last <= 9; last++) expect(nhsCheckDigitHolds(digits(`400000008${last}`))).toBe(false);
    expect(isNhsNumberDigits(Buffer.from('x9434765919'), 1)).toBe(true);
    expect(isNhsNumberDigits(Buffer.from('9434765910'), 0)).toBe(false);
  });

  it('leaves a 10-digit number whose check digit fails alone', () => {
    expect(classifyTextValue('943 476 5918') & PATTERN.nhsNumber).toBe(0);
    expect(classifyTextValue('9434765918') & PATTERN.nhsNumber).toBe(0);
  });

  // HMRC, National Insurance Manual NIM39110: first letter not D, F, I, Q, U, V; second
  // letter not D, F, I, O, Q, U, V; prefixes BG, GB, KN, NK, NT, TN, ZZ not allocated;
  // suffix A-D.
  it.each(['QQ 12 34 56 C', 'DA123456A', 'AO123456A', 'BG123456A', 'GB 12 34 56 A', 'KN123456B', 'NK123456B', 'NT123456C', 'TN123456D', 'ZZ123456A', 'AB123456E', 'AB12345C'])(
    'does not read %s as a National Insurance number',
    (value) => {
      expect(classifyTextValue(value) & PATTERN.niNumber).toBe(0);
    },
  );

  it('reads YYYYMMDD numbers between 1900 and 2099 as dates, checking month and day', () => {
    const at = (text: string): boolean => isCompactDate(Buffer.from(text), 0);
    expect(at('20240229')).toBe(true);
    expect(at('19991231')).toBe(true);
    expect(at('20241301')).toBe(false);
    expect(at('20240431')).toBe(false);
    expect(at('18991231')).toBe(false);
    expect(at('12345678')).toBe(false);
  });
});
