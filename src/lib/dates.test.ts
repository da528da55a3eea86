import { describe, expect, it } from 'vitest';
import { dateInWords, dateTimeInWords } from './dates';

describe('dates in words', () => {
  it('writes day, month in full and year, in UTC, with a 24-hour time', () => {
    expect(dateInWords('2026-12-02T09:14:00Z')).toBe('2 December 2026');
    expect(dateTimeInWords('2026-12-02T09:14:59Z')).toBe('2 December 2026 at 09:14 UTC');
    // Late in the evening UTC is still the same UTC day, whatever the server's zone.
    expect(dateTimeInWords(new Date(Date.UTC(2026, 0, 31, 23, 5)))).toBe('31 January 2026 at 23:05 UTC');
    expect(dateTimeInWords('2026-03-01T00:00:00Z')).toBe('1 March 2026 at 00:00 UTC');
  });
});
