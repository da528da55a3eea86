import { describe, expect, it } from 'vitest';
import { classifyTextValue, isCompactDate, PATTERN } from './valuePatterns';

// Example values use ranges reserved for documentation or never issued: e-mail domains of
// RFC 2606, IPv4 TEST-NET-1 (RFC 5737), IPv6 2001:db8::/32 (RFC 3849), the fictional
// NANP 555-01xx numbers, and SSN area numbers 900-999, which the SSA never assigns.

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
    ['SW1A 1AA', PATTERN.postalCode],
    ['K1A 0B1', PATTERN.postalCode],
  ])('recognises %s', (value, bit) => {
    expect(classifyTextValue(value) & bit).toBe(bit);
  });

  it.each([
    '18-44', '45-64', '80+', 'F', 'Ward-12', 'TVG', 'Tern Valley General', '10:30:00', '14:30', '3.5', 'stage 2',
    '2019-20', '1.2.3', 'none', 'call-back', 'A&E', '2024', '13/13/2024', '4-6 h', 'v2.10.3.1000',
  ])('does not flag the ordinary value %s', (value) => {
    expect(classifyTextValue(value)).toBe(0);
  });

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
