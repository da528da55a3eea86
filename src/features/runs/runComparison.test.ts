import { beforeAll, describe, expect, it } from 'vitest';
import type { Result, Spec } from '../../engine/boundary/schemas';
import { estimateMoves, specChanges } from './runComparison';
import { CALL_BACK_SPEC, engineResult } from './testSupport';

describe('run comparison', () => {
  const changed: Spec = { ...CALL_BACK_SPEC, model: 'modified-poisson', effectMeasure: 'RR', covariates: CALL_BACK_SPEC.covariates.slice(0, 2) };
  let before: Result;
  let after: Result;
  beforeAll(async () => {
    before = await engineResult('call-back', CALL_BACK_SPEC);
    after = await engineResult('call-back', { ...CALL_BACK_SPEC, covariates: CALL_BACK_SPEC.covariates.slice(0, 2) });
  });

  it('lists exactly the changed specification fields', () => {
    expect(specChanges(CALL_BACK_SPEC, changed)).toEqual([
      { path: 'covariates', before: 'sex categorical F, comorbidity_score continuous, prior_admissions continuous, site categorical Tern Valley General', after: 'sex categorical F, comorbidity_score continuous' },
      { path: 'effectMeasure', before: 'OR', after: 'RR' },
      { path: 'model', before: 'logistic', after: 'modified-poisson' },
    ]);
    expect(specChanges(CALL_BACK_SPEC, { ...CALL_BACK_SPEC })).toEqual([]);
    expect(specChanges(CALL_BACK_SPEC, { ...CALL_BACK_SPEC, preventive: true })).toEqual([{ path: 'preventive', before: '(default)', after: 'true' }]);
  });

  it('moves the key estimates by the difference of the two results', () => {
    const moves = estimateMoves(before, after);
    const eighty = moves.find((move) => move.label === 'OR in age_band = 80+')!;
    const stratum = (result: Result) => result.strata.find((entry) => entry.level === '80+')!.effect.estimate!;
    expect(eighty.change).toBe(stratum(after) - stratum(before));
    const reri = moves.find((move) => move.label === 'RERI, 80+')!;
    const reriOf = (result: Result) => result.interaction.additive.find((entry) => entry.level === '80+')!.reri!.estimate!;
    expect(reri.change).toBe(reriOf(after) - reriOf(before));
    expect(moves.find((move) => move.label === 'Omnibus test p')!.change).toBe(after.interaction.omnibus.p! - before.interaction.omnibus.p!);
    // The same run against itself moves nothing.
    expect(estimateMoves(before, before).every((move) => move.change === 0)).toBe(true);
  });
});
