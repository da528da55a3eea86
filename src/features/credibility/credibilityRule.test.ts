/**
 * Crossgrain's credibility rule (credibilityRule.ts): start at high, step down per failed
 * item, floor at very low. Expected levels follow from the rule as written in the file's
 * header (the rule is ours; no published table to check against).
 */
import { describe, expect, it } from 'vitest';
import type { Result } from '@/engine/boundary/schemas';
import { bonferroni, looksBanded, modificationPattern, observedDirection, overallRating, type RuleInput } from './credibilityRule';

const best: RuleInput = {
  prespecified: true, directionPredicted: true, directionAgrees: true, alpha: 0.05, p: 0.001, pAdjusted: 0.003,
  numberInCategories: false, relatedConsistent: true, rationale: 'strong', priorEvidence: 'supports',
};

describe('the overall rating', () => {
  it('is high for a prespecified, predicted, adjusted-significant, consistent finding with a rationale', () => {
    expect(overallRating(best)).toEqual({ level: 'high', label: 'High credibility', reasons: [], provisional: false });
  });

  it('steps down one level per failed item, with the reason in words', () => {
    const one = overallRating({ ...best, prespecified: false });
    expect(one.level).toBe('moderate');
    expect(one.reasons).toEqual(['The modifier was not named in advance of the data.']);
    expect(overallRating({ ...best, directionAgrees: false }).level).toBe('moderate');
    expect(overallRating({ ...best, directionPredicted: false, directionAgrees: null }).level).toBe('moderate');
    expect(overallRating({ ...best, pAdjusted: 0.06 }).level).toBe('moderate');
    expect(overallRating({ ...best, numberInCategories: true }).level).toBe('moderate');
    expect(overallRating({ ...best, relatedConsistent: false }).level).toBe('moderate');
    expect(overallRating({ ...best, rationale: 'weak' }).level).toBe('moderate');
    expect(overallRating({ ...best, priorEvidence: 'contradicts' }).level).toBe('moderate');
    expect(overallRating({ ...best, prespecified: false, numberInCategories: true }).level).toBe('low');
  });

  it('takes two steps when the interaction test misses alpha before adjustment, and floors at very low', () => {
    expect(overallRating({ ...best, p: 0.2, pAdjusted: 0.6 }).level).toBe('low');
    expect(overallRating({ ...best, p: null, pAdjusted: null }).level).toBe('low');
    const worst = overallRating({ ...best, prespecified: false, directionPredicted: false, directionAgrees: null, p: 0.4, pAdjusted: 1, rationale: 'none', priorEvidence: 'contradicts' });
    expect(worst.level).toBe('very-low');
    expect(worst.reasons).toHaveLength(5);
  });

  it('costs nothing for items that do not apply or are unrated, and says the rating is provisional', () => {
    const unrated = overallRating({ ...best, relatedConsistent: null, rationale: null, priorEvidence: null, directionAgrees: null });
    expect(unrated).toMatchObject({ level: 'high', provisional: true });
    expect(overallRating({ ...best, priorEvidence: 'mixed', rationale: 'plausible' }).level).toBe('high');
  });
});

describe('the computed parts', () => {
  it('adjusts by Bonferroni, capped at 1', () => {
    expect(bonferroni(0.01, 3)).toBeCloseTo(0.03, 15);
    expect(bonferroni(0.4, 3)).toBe(1);
    expect(bonferroni(0.02, 0)).toBe(0.02);
    expect(bonferroni(null, 3)).toBeNull();
  });

  it('recognises banded levels', () => {
    expect(looksBanded(['18-44', '45-64', '65-79', '80+'])).toBe(true);
    expect(looksBanded(['<65', '65 to 74', '>=75'])).toBe(true);
    expect(looksBanded(['F', 'M'])).toBe(false);
    expect(looksBanded(['ward A', '80+'])).toBe(false);
  });

  // A hand-made result fragment: odds ratios 0.9 in the reference level and 0.5 in "80+".
  const fragment = (estimates: Record<string, number>): Result => ({
    effectMeasure: 'OR',
    modifier: { column: 'age_band', type: 'categorical', reference: '18-44', levels: Object.keys(estimates), centre: null, mean: null, sd: null, observed: null },
    strata: Object.entries(estimates).map(([level, estimate]) => ({ level, n: 100, events: 10, effect: { estimate, lower: null, upper: null, se: null, p: null }, pAdjusted: { holm: null, bh: null } })),
  }) as Partial<Result> as Result;

  it('reads the observed direction against the prediction on the log scale for ratios', () => {
    const result = fragment({ '18-44': 0.9, '80+': 0.5 });
    // |ln 0.5| = 0.693 > |ln 0.9| = 0.105: stronger in 80+.
    expect(observedDirection(result, 'stronger', '80+')).toMatchObject({ agrees: true });
    expect(observedDirection(result, 'weaker', '80+')).toMatchObject({ agrees: false });
    expect(observedDirection(result, 'reversed', '80+')).toMatchObject({ agrees: false });
    expect(observedDirection(fragment({ '18-44': 0.8, '80+': 1.3 }), 'reversed', '80+')).toMatchObject({ agrees: true });
    // Only one non-reference level: a prediction in other words still points at it.
    expect(observedDirection(result, 'stronger', 'the oldest patients')).toMatchObject({ agrees: true });
    expect(observedDirection(fragment({ '18-44': 0.9, '45-64': 0.8, '80+': 0.5 }), 'stronger', 'the oldest patients').agrees).toBeNull();
    expect([...modificationPattern(fragment({ '18-44': 0.9, '45-64': 0.95, '80+': 0.5 }))]).toEqual([['45-64', -1], ['80+', 1]]);
  });
});
