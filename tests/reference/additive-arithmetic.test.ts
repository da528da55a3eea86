/**
 * RERI, AP and S arithmetic on published rates: lung-cancer deaths per 100,000 person-years
 * among insulation workers and controls by asbestos exposure and smoking (Hammond,
 * Selikoff and Seidman, Ann N Y Acad Sci 1979;330:473-490, as reprinted in epidemiology
 * textbooks). The four rates below are stated from memory: neither exposed 11.3, asbestos
 * only 58.4, smoking only 122.6, both 601.6.
 */
import { describe, expect, it } from 'vitest';
import { attributableProportion, attributableProportionOfJointEffect } from '@/engine/measures/attributableProportion.js';
import { jointLogRatios, recodeForPreventive } from '@/engine/measures/jointLogRatios.js';
import { relativeExcessRiskDueToInteraction } from '@/engine/measures/relativeExcessRiskDueToInteraction.js';
import { synergyIndex } from '@/engine/measures/synergyIndex.js';
import { expectClose } from './support/tolerance.js';

const neither = 11.3; // from memory (Hammond et al. 1979)
const asbestosOnly = 58.4; // from memory
const smokingOnly = 122.6; // from memory
const both = 601.6; // from memory

/** Joint log-ratios with zero variance: coefficients (b1, b2, b3) = (ln RR10, ln RR01, ln RR11 − ln RR10 − ln RR01). */
function ratesToJoint(r00: number, r10: number, r01: number, r11: number) {
  const b = [Math.log(r10 / r00), Math.log(r01 / r00), Math.log(r11 / r00) - Math.log(r10 / r00) - Math.log(r01 / r00)];
  const contrasts = Float64Array.from([1, 0, 0, 0, 1, 0, 1, 1, 1]);
  return { b, joint: jointLogRatios(b, new Float64Array(9), contrasts) };
}

describe('additive interaction on the asbestos and smoking death rates', () => {
  const { joint } = ratesToJoint(neither, asbestosOnly, smokingOnly, both);
  it('RERI = (R11 − R10 − R01 + R00)/R00', () => {
    const reri = relativeExcessRiskDueToInteraction(joint, 1.96);
    expectClose(reri.estimate, (both - asbestosOnly - smokingOnly + neither) / neither, 'RERI exact from the rates', 1e-12);
    expect(reri.estimate).toBeCloseTo(38.2, 1); // textbook value 38.2 (from memory)
    expect(reri.se).toBe(0);
  });
  it('AP = RERI/RR11 and AP* = RERI/(RR11 − 1)', () => {
    expectClose(attributableProportion(joint, 1.96).estimate, (both - asbestosOnly - smokingOnly + neither) / both, 'AP', 1e-12);
    expect(attributableProportion(joint, 1.96).estimate).toBeCloseTo(0.72, 2); // textbook value 0.72 (from memory)
    expectClose(attributableProportionOfJointEffect(joint, 1.96)!.estimate, (both - asbestosOnly - smokingOnly + neither) / (both - neither), 'AP*', 1e-12);
  });
  it('S = (RR11 − 1)/(RR10 + RR01 − 2)', () => {
    const s = synergyIndex(joint, 1.96)!;
    expectClose(s.estimate, (both - neither) / (asbestosOnly + smokingOnly - 2 * neither), 'S', 1e-12);
    expect(s.estimate).toBeCloseTo(3.7, 1); // textbook value 3.7 (from memory)
  });
  it('a preventive coding of the same rates is recoded back to the lowest-risk reference (Knol et al. 2011)', () => {
    // Code "no asbestos" as the exposure: the lowest cell becomes (exposed, reference level).
    const { b, joint: flipped } = ratesToJoint(asbestosOnly, neither, both, smokingOnly);
    const recoded = recodeForPreventive(b, new Float64Array(9), flipped);
    expect(recoded.referenceCell).toEqual([1, 0]);
    expectClose(relativeExcessRiskDueToInteraction(recoded, 1.96).estimate, (both - asbestosOnly - smokingOnly + neither) / neither, 'RERI after recoding', 1e-12);
  });
});
