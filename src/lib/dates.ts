/**
 * Dates in prose, the British way the product writes them: "2 December 2026" and
 * "2 December 2026 at 09:14 UTC". Data fields, filters, file names and exports keep ISO
 * 8601 (yyyy-mm-dd); this is for sentences people read (briefs, statements).
 */

const DAY = new Intl.DateTimeFormat('en-GB', { day: 'numeric', month: 'long', year: 'numeric', timeZone: 'UTC' });
const TIME = new Intl.DateTimeFormat('en-GB', { hour: '2-digit', minute: '2-digit', hourCycle: 'h23', timeZone: 'UTC' });

/** "2 December 2026" (the UTC calendar day). */
export function dateInWords(value: Date | string): string {
  return DAY.format(new Date(value));
}

/** "2 December 2026 at 09:14 UTC". */
export function dateTimeInWords(value: Date | string): string {
  const at = new Date(value);
  return `${DAY.format(at)} at ${TIME.format(at)} UTC`;
}
