/** Comparing a re-run with the run it verifies (invented values; the rule is the product brief's). */
import { describe, expect, it } from 'vitest';
import { compareRuns, resultDifferences, verificationSentence } from './runVerification';

const facts = (result: unknown, overrides: Partial<Parameters<typeof compareRuns>[0]> = {}) => ({
  extractSha256: 'e'.repeat(64), specHash: 's'.repeat(64), engineVersion: 'crossgrain-engine/1.0.0', seed: 1, result, ...overrides,
});
const result = { n: 120, strata: [{ level: '18-44', effect: { estimate: 0.7312, lower: 0.5, upper: 1.01 } }], warnings: [] };

describe('compareRuns', () => {
  it('calls identical inputs and results reproduced, whatever the key order', () => {
    const reordered = { warnings: [], strata: [{ effect: { upper: 1.01, lower: 0.5, estimate: 0.7312 }, level: '18-44' }], n: 120 };
    const verification = compareRuns(facts(result), facts(reordered));
    expect(verification.reproduced).toBe(true);
    expect(verification.differences).toEqual([]);
    expect(verificationSentence(verification)).toMatch(/^Reproduced bit for bit/);
  });

  it('lists a result value that moved in its last bit', () => {
    const moved = structuredClone(result);
    moved.strata[0].effect.estimate = 0.7312 + Number.EPSILON;
    const verification = compareRuns(facts(result), facts(moved));
    expect(verification.reproduced).toBe(false);
    expect(verification.checks.find((c) => c.name === 'result')?.same).toBe(false);
    expect(verification.differences).toEqual([{ path: 'strata[0].effect.estimate', original: '0.7312', rerun: String(0.7312 + Number.EPSILON) }]);
    expect(verificationSentence(verification)).toBe('Not reproduced: the inputs are the same, and 1 result value differs.');
  });

  it('names differing inputs even when the result happens to agree', () => {
    const verification = compareRuns(facts(result), facts(result, { engineVersion: 'crossgrain-engine/1.1.0', seed: 2 }));
    expect(verification.reproduced).toBe(false);
    expect(verificationSentence(verification)).toBe('Not reproduced: the engine and seed differ, and the result is identical.');
  });
});

describe('resultDifferences', () => {
  it('reports missing fields and extra array items, and stops listing at the limit', () => {
    const { differences, count } = resultDifferences({ a: [1, 2], b: 1 }, { a: [1, 2, 3], c: 1 }, 2);
    expect(count).toBe(3);
    expect(differences).toEqual([
      { path: 'a[2]', original: '(absent)', rerun: '3' },
      { path: 'b', original: '1', rerun: '(absent)' },
    ]);
  });
});
