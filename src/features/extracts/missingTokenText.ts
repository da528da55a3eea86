/**
 * The missing-value tokens a column held, in words, for the dictionary's "What we saw" and
 * the extract page: blank cells first and named as such (`5 blank cells, NA 10, "." 3`),
 * then the other tokens with their counts, in the order the reader lists them.
 */
import type { ColumnProfile } from './extracts.schema';

type TokenCounts = ColumnProfile['missingTokens'];

const count = (n: number): string => n.toLocaleString('en-GB');

/** Empty (or all-space) cells of a column, as the reader counted them (0 when none or not recorded). */
export function blankCellCount(tokens: TokenCounts): number {
  return (tokens ?? []).filter((t) => t.token === '').reduce((sum, t) => sum + t.count, 0);
}

/** `5 blank cells, NA 10, . 3`; '' when the column held no missing-value token. */
export function missingTokenText(tokens: TokenCounts): string {
  const blanks = blankCellCount(tokens);
  const others = (tokens ?? []).filter((t) => t.token !== '').map((t) => `${t.token} ${count(t.count)}`);
  return [...(blanks > 0 ? [`${count(blanks)} blank ${blanks === 1 ? 'cell' : 'cells'}`] : []), ...others].join(', ');
}
