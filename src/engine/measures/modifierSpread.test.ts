import { describe, expect, it } from 'vitest';
import { ordinal } from '../analysis/pointLabels.js';
import { modifierSpread } from './modifierSpread.js';

const sample = [1.2, 3.7, 2.2, 9.1, 4.4, 4.4, 5.0, 6.3, 2.9, 7.75, 1.9, 3.3, 8.05, 4.8, 5.5, 2.6, 3.05, 6.8, 4.1, 5.9];

describe('modifierSpread', () => {
  it('gives the 5th and 95th percentiles and ten equal-width bin counts as R does', () => {
    const spread = modifierSpread(Float64Array.from(sample).sort());
    // R 4.2.2: quantile(x, c(0.05, 0.95), type = 7) → 1.865, 8.1025
    expect(spread.p5).toBeCloseTo(1.865, 12);
    expect(spread.p95).toBeCloseTo(8.1025, 12);
    // R 4.2.2: as.vector(table(cut(x, seq(min(x), max(x), length.out = 11), right = FALSE, include.lowest = TRUE)))
    expect(spread.bins.map((bin) => bin.n)).toEqual([2, 2, 3, 2, 4, 2, 1, 1, 2, 1]);
    // R 4.2.2: seq(min(x), max(x), length.out = 11) → 1.2, 1.99, ..., 8.31, 9.1
    expect(spread.bins[1].from).toBeCloseTo(1.99, 12);
    expect(spread.bins[9].to).toBe(9.1);
    expect(spread.bins.reduce((sum, bin) => sum + bin.n, 0)).toBe(sample.length);
  });

  it('puts every row in one bin when all values are equal', () => {
    expect(modifierSpread(Float64Array.from([3, 3, 3])).bins).toEqual([{ from: 3, to: 3, n: 3 }]);
  });
});

describe('ordinal', () => {
  it('names percentiles in English (common practice)', () => {
    expect([1, 2, 3, 5, 11, 12, 13, 21, 22, 50, 90, 12.5].map(ordinal)).toEqual(['1st', '2nd', '3rd', '5th', '11th', '12th', '13th', '21st', '22nd', '50th', '90th', '12.5th']);
  });
});
