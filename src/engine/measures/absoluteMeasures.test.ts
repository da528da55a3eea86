import { describe, expect, it } from 'vitest';
import { runAnalysis } from '../index.js';
import type { AnalysisSpec, EngineData } from '../types.js';
import { eValueOfInterval, eValueOfRiskRatio } from './eValue.js';
import { numberNeeded } from './numberNeededToTreat.js';

describe('E-value (VanderWeele and Ding, Ann Intern Med 2017;167:268-274)', () => {
  it("reproduces the paper's worked example (from memory: RR 3.9, 95% CI 1.8 to 8.7)", () => {
    // From memory: the paper's example of breastfeeding and infant respiratory death gives
    // RR 3.9 (1.8, 8.7) and an E-value of 3.0 for the lower limit; the formula gives
    // 3.9 + sqrt(3.9 · 2.9) for the point estimate (hand arithmetic: 7.2630...).
    expect(eValueOfRiskRatio(3.9)).toBeCloseTo(3.9 + Math.sqrt(3.9 * 2.9), 14);
    expect(eValueOfRiskRatio(3.9)).toBeCloseTo(7.263, 3);
    expect(eValueOfInterval(1.8, 8.7)).toBeCloseTo(3.0, 12); // 1.8 + sqrt(1.8 · 0.8) = 1.8 + 1.2
  });

  it('inverts protective ratios and gives 1 when the interval includes 1', () => {
    // Published rule: RR < 1 uses 1/RR; the interval limit nearer 1 is the upper one then.
    expect(eValueOfRiskRatio(0.5)).toBeCloseTo(2 + Math.sqrt(2), 14);
    expect(eValueOfInterval(0.25, 0.5)).toBeCloseTo(2 + Math.sqrt(2), 14);
    expect(eValueOfInterval(0.8, 1.3)).toBe(1);
    expect(eValueOfRiskRatio(1)).toBe(1);
  });
});

describe('number needed to treat (Altman, BMJ 1998;317:1309-1312)', () => {
  it('names the direction and keeps an interval through 0 as an interval through infinity', () => {
    // Hand arithmetic: RD −0.05 (−0.08, 0.01) → NNT 20 to treat; 12.5 to treat … ∞ … 100 to harm.
    const through = numberNeeded(-0.05, -0.08, 0.01);
    expect(through.estimate).toBeCloseTo(20, 12);
    expect(through.direction).toBe('treat');
    expect(through.throughInfinity).toBe(true);
    expect(through.lower).toEqual({ value: 1 / 0.08, direction: 'treat' });
    expect(through.upper.value).toBeCloseTo(100, 10);
    expect(through.upper.direction).toBe('harm');
    // RD 0.1 (0.05, 0.2) → 10 to harm, interval 5 to 20 to harm.
    const harm = numberNeeded(0.1, 0.05, 0.2);
    expect(harm.direction).toBe('harm');
    expect(harm.throughInfinity).toBe(false);
    expect([harm.upper.value, harm.lower.value]).toEqual([5, 20]);
  });
});

describe('"standardize" is refused where it has no meaning', () => {
  const data: EngineData = {
    rowCount: 8,
    columns: {
      y: { kind: 'numeric', values: Float64Array.of(1, 0, 1, 0, 2, 3, 1, 0) },
      a: { kind: 'numeric', values: Float64Array.of(0, 1, 0, 1, 0, 1, 0, 1) },
      w: { kind: 'numeric', values: Float64Array.of(1, 2, 3, 4, 5, 6, 7, 8) },
    },
  };
  const base: AnalysisSpec = {
    outcome: { column: 'y', type: 'continuous' },
    exposure: { column: 'a', reference: '0' },
    modifier: { column: 'w', type: 'continuous' },
    covariates: [],
    model: 'linear',
    ci: { level: 0.95, method: 'delta' },
    standardize: true,
  };
  it('for a continuous outcome', async () => {
    await expect(runAnalysis(data, base)).rejects.toThrow(/need a binary outcome/);
  });
  it('for a continuous modifier', async () => {
    await expect(runAnalysis(data, { ...base, outcome: { column: 'y', type: 'binary' } })).rejects.toThrow(/categorical modifier/);
  });
});
