import { describe, expect, it } from 'vitest';
import { johnsonNeyman } from './johnsonNeyman.js';
import { jointLogRatios } from './jointLogRatios.js';
import { relativeExcessRiskDueToInteractionMover } from './relativeExcessRiskDueToInteraction.js';
import { interactionPower, smallestDetectableInteraction } from '../planning/interactionPower.js';

describe('Johnson-Neyman cases (Bauer and Curran 2005)', () => {
  it('significant outside the roots when the leading coefficient is positive', () => {
    // Effect 0.1·u with se √(0.01 + 0.0004u²): by hand, (0.01 − 1.96²·0.0004)u² = 1.96²·0.01.
    const result = johnsonNeyman({ b1: 0, b3: 0.1, v11: 0.01, v13: 0, v33: 0.0004 }, 1.96, [-10, 10]);
    const root = Math.sqrt((1.96 ** 2 * 0.01) / (0.01 - 1.96 ** 2 * 0.0004));
    expect(result.significant).toBe('outside');
    expect(result.bounds![0]).toBeCloseTo(-root, 12);
    expect(result.bounds![1]).toBeCloseTo(root, 12);
    expect(result.boundsInRange).toEqual([true, true]);
  });
  it('significant inside when the leading coefficient is negative, shifted by the centre', () => {
    const result = johnsonNeyman({ b1: 1, b3: 0.01, v11: 0.04, v13: 0, v33: 0.01 }, 1.96, [0, 5], 2);
    expect(result.significant).toBe('inside');
    expect(result.bounds![0]).toBeLessThan(2);
    expect(result.bounds![1]).toBeGreaterThan(2);
  });
  it('everywhere and nowhere', () => {
    // With b3 ≠ 0 the effect crosses zero somewhere, so "everywhere" needs a constant effect.
    expect(johnsonNeyman({ b1: 1, b3: 0, v11: 0.01, v13: 0, v33: 0 }, 1.96, [0, 1]).significant).toBe('everywhere');
    expect(johnsonNeyman({ b1: 0, b3: 0, v11: 0.01, v13: 0, v33: 0.01 }, 1.96, [0, 1]).significant).toBe('nowhere');
  });
});

describe('MOVER for RERI (Zou 2008)', () => {
  it('with independent ratios, the limits combine each ratio\'s own distance from its estimate', () => {
    // By hand from Zou's formula with all correlations 0.
    const v = 0.04;
    const joint = jointLogRatios([0.5, 0.3, 0.2], Float64Array.from([v, 0, 0, 0, v, 0, 0, 0, v]), Float64Array.from([1, 0, 0, 0, 1, 0, 0, 0, 1]));
    const z = 1.96;
    const [t10, t01, t11] = [Math.exp(0.5), Math.exp(0.3), Math.exp(0.2)];
    const se = Math.sqrt(v);
    const lo = (t: number) => t * Math.exp(-z * se);
    const hi = (t: number) => t * Math.exp(z * se);
    const reri = t11 - t10 - t01 + 1;
    const mover = relativeExcessRiskDueToInteractionMover(joint, z);
    expect(mover.lower).toBeCloseTo(reri - Math.hypot(t11 - lo(t11), hi(t10) - t10, hi(t01) - t01), 12);
    expect(mover.upper).toBeCloseTo(reri + Math.hypot(hi(t11) - t11, t10 - lo(t10), t01 - lo(t01)), 12);
  });
});

describe('planning by the normal approximation', () => {
  it('power and detectable size are inverse to each other, and an interaction needs about four times the sample', () => {
    // Two-sided α = 0.05, power 0.8: (1.959964 + 0.841621)·se = 2.801585·se (R: qnorm(0.975) + qnorm(0.8)).
    const detectable = smallestDetectableInteraction(0.25, 0.05, 0.8);
    expect(detectable).toBeCloseTo(0.25 * 2.801585, 4);
    expect(interactionPower(detectable, 0.25, 0.05)).toBeCloseTo(0.8, 10);
    // Brookes et al. (2004): se doubled ⇒ the same power needs 4× the rows (se ∝ 1/√n).
    expect(smallestDetectableInteraction(0.5, 0.05, 0.8) / detectable).toBeCloseTo(2, 10);
  });
});
