import { describe, expect, it } from 'vitest';
import { ingestExtract } from './extracts';
import { blankCellCount, missingTokenText } from './missingTokenText';
import { chunked } from './testSupport';

describe('missing-value tokens in words', () => {
  it('counts blank cells (empty, all-space or quoted empty) beside the other tokens', async () => {
    // Column b: one empty field, one field of spaces, one quoted empty field, two NA and one "." (counted by hand).
    const csv = 'a,b\n1,\n2,   \n3,""\n4,NA\n5,na\n6,.\n7,8\n';
    const result = await ingestExtract(chunked(csv, 5), { screen: { regime: 'generic' } });
    const b = result.profile[1];
    expect(blankCellCount(b.missingTokens)).toBe(3);
    expect(missingTokenText(b.missingTokens)).toBe('3 blank cells, NA 2, . 1');
    expect(missingTokenText(result.profile[0].missingTokens)).toBe('');
  });

  it('writes one blank cell in the singular, and large counts with separators', () => {
    expect(missingTokenText([{ token: '', count: 1 }])).toBe('1 blank cell');
    expect(missingTokenText([{ token: 'NULL', count: 12_345 }, { token: '', count: 2_000 }])).toBe('2,000 blank cells, NULL 12,345');
    expect(missingTokenText(undefined)).toBe('');
  });
});
