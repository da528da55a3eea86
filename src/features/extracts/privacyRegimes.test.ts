/**
 * The identifier screen under each privacy regime, from CSV text through the reader to the
 * findings (src/lib/privacyRegime.ts), with the source of each value beside it.
 * Fewer than 50 rows per file, so the near-unique rule stays out of the way.
 */
import { describe, expect, it } from 'vitest';
import type { PrivacyRegime } from '@/lib/privacyRegime';
import { ingestExtract } from './extracts';
import { chunked } from './testSupport';

async function screen(csv: string, regime: PrivacyRegime) {
  const result = await ingestExtract(chunked(csv, 64), { screen: { regime } });
  return result.findings.map((f) => ({ column: f.column, rule: f.rule, regime: f.regime }));
}

const file = (header: string, values: readonly string[]) => `${header},y\n${values.map((v, i) => `${v},${i % 2}`).join('\n')}\n`;

// NHS numbers: 943 476 5919 is NHS Digital's published example; 401 023 2137 and
// 450 557 7104 pass the modulus-11 check (computed by hand: weighted sums 92 and 216, check digits 7 and 4).
const validNhs = ['9434765919', '4010232137', '4505577104'];
// The same numbers with the last digit changed: the check fails.
const failingNhs = ['9434765918', '4010232138', '4505577105'];

describe('the identifier screen by privacy regime', () => {
  it('UK: a column of NHS numbers whose check digit holds is refused, plain or formatted', async () => {
    expect(await screen(file('ref', validNhs), 'uk')).toEqual([{ column: 'ref', rule: 'nhs-number-pattern', regime: 'uk' }]);
    // Plain ten-digit numbers refuse when half the column's values pass the check (the zipShare-like threshold, 0.5).
    expect(await screen(file('ref', ['9434765919', '4010232137', 'x', 'y']), 'uk')).toEqual([{ column: 'ref', rule: 'nhs-number-pattern', regime: 'uk' }]);
    expect(await screen(file('ref', ['9434765919', 'w', 'x', 'y']), 'uk')).toEqual([]);
    // Written 3-3-4, it is also shaped like a North American telephone number: both rules say so.
    expect((await screen(file('ref', ['943 476 5919', 'x']), 'uk')).map((f) => f.rule)).toEqual(['nhs-number-pattern', 'phone-pattern']);
  });

  it('UK: ten-digit numbers whose check digit fails are not NHS numbers', async () => {
    expect(await screen(file('ref', failingNhs), 'uk')).toEqual([]);
    expect(await screen(file('ref', ['9434765918', 'x', 'y']), 'uk')).toEqual([]);
    expect((await screen(file('ref', ['943 476 5918', 'x']), 'uk')).map((f) => f.rule)).toEqual(['phone-pattern']);
  });

  it('UK: National Insurance numbers are refused, except the prefixes HMRC never allocates', async () => {
    // HMRC National Insurance Manual NIM39110 (format and excluded prefixes); digits invented.
    expect(await screen(file('ref', ['AB 12 34 56 C', 'x']), 'uk')).toEqual([{ column: 'ref', rule: 'ni-number-pattern', regime: 'uk' }]);
    expect(await screen(file('ref', ['BG123456A', 'GB123456A', 'NK123456B', 'TN123456C', 'ZZ123456D', 'QQ123456C']), 'uk')).toEqual([]);
  });

  it('UK: full postcodes are refused, postcode districts are not', async () => {
    expect(await screen(file('area', ['LS1 4AP', 'x']), 'uk')).toEqual([{ column: 'area', rule: 'postal-code-pattern', regime: 'uk' }]);
    expect(await screen(file('area', ['LS1', 'SW1A', 'M60']), 'uk')).toEqual([]);
  });

  it('US: a ZIP+4 code is refused; the UK rules do not apply', async () => {
    expect(await screen(file('area', ['02139-4307', 'x']), 'us-hipaa')).toEqual([{ column: 'area', rule: 'postal-code-pattern', regime: 'us-hipaa' }]);
    expect(await screen(file('ref', validNhs), 'us-hipaa')).toEqual([]);
    expect(await screen(file('ref', ['AB 12 34 56 C', 'x']), 'us-hipaa')).toEqual([]);
    // SSN area numbers 900-999 are never assigned (SSA): the shape alone is refused.
    expect(await screen(file('ref', ['900-12-3456', 'x']), 'us-hipaa')).toEqual([{ column: 'ref', rule: 'ssn-pattern', regime: 'us-hipaa' }]);
  });

  it('UK: ZIP+4 codes and SSN shapes are not UK rules', async () => {
    expect(await screen(file('area', ['02139-4307', 'x']), 'uk')).toEqual([]);
    expect(await screen(file('ref', ['900-12-3456', 'x']), 'uk')).toEqual([]);
  });

  it('every regime refuses e-mail addresses and full dates', async () => {
    for (const regime of ['us-hipaa', 'uk', 'generic'] as const) {
      expect(await screen(file('contact', ['a@example.org', 'x']), regime)).toEqual([{ column: 'contact', rule: 'email-pattern', regime }]);
      expect(await screen(file('seen', ['02/12/2026', 'x']), regime)).toEqual([{ column: 'seen', rule: 'date-pattern', regime }]);
    }
  });
});
