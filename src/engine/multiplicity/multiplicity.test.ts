import { describe, expect, it } from 'vitest';
import { benjaminiHochbergAdjustment } from './benjaminiHochbergAdjustment.js';
import { holmAdjustment } from './holmAdjustment.js';

const p = [0.01, 0.04, 0.03, 0.2, 0.005];

describe('multiplicity adjustments', () => {
  it('Holm matches R', () => {
    // R 4.2.2: p.adjust(c(0.01, 0.04, 0.03, 0.2, 0.005), "holm")
    const expected = [0.04, 0.09, 0.09, 0.2, 0.025];
    holmAdjustment(p).forEach((value, k) => expect(value).toBeCloseTo(expected[k], 14));
  });
  it('Benjamini-Hochberg matches R', () => {
    // R 4.2.2: p.adjust(c(0.01, 0.04, 0.03, 0.2, 0.005), "BH")
    const expected = [0.025, 0.05, 0.05, 0.2, 0.025];
    benjaminiHochbergAdjustment(p).forEach((value, k) => expect(value).toBeCloseTo(expected[k], 14));
  });
  it('null entries stay null and do not count', () => {
    expect(holmAdjustment([0.02, null, 0.04])).toEqual([0.04, null, 0.04]);
    expect(benjaminiHochbergAdjustment([null])).toEqual([null]);
  });
});
