import { describe, expect, it } from 'vitest';
import { equationText, modelEquation } from './modelEquation';
import { draftToSpec } from './specValidation';
import { CALL_BACK, callBackDraft, column } from './testSupport';

describe('model equation', () => {
  it('writes a categorical modifier with one indicator and one product term per non-reference level', () => {
    const result = draftToSpec(CALL_BACK, callBackDraft());
    if (!result.ok) throw new Error('draft should convert');
    const equation = modelEquation(result.spec, CALL_BACK);
    // β numbering: 0 intercept, 1 intervention, 2-4 age bands, 5-7 products, 8 sex, 9 comorbidity, 10-11 site.
    expect(equationText(equation)).toBe(
      'logit(P(readmitted_30d = 1)) = β0 + β1·call_back + β2·[age_band = 45-64] + β3·[age_band = 65-79] + β4·[age_band = 80+]' +
        ' + β5·call_back×[age_band = 45-64] + β6·call_back×[age_band = 65-79] + β7·call_back×[age_band = 80+]' +
        ' + β8·[sex = M] + β9·comorbidity_score + β10·[site = Ridgemoor Infirmary] + β11·[site = Tern Valley General]',
    );
    expect(equation.terms.filter((term) => term.role === 'product')).toHaveLength(3);
    expect(equation.notes).toContain('age_band: reference level 18-44.');
  });

  it('writes a continuous, centred modifier with its single product term under an identity link', () => {
    const columns = [
      column('length_of_stay_days', 'continuous', null),
      column('early_mobility', 'binary', ['0', '1']),
      column('frailty_score', 'continuous', null, { min: 1, max: 9, mean: 3.8, sd: 1.7, median: 3.7 }),
      column('admission_type', 'binary', ['elective', 'emergency']),
    ];
    const equation = modelEquation(
      {
        outcome: { column: 'length_of_stay_days', type: 'continuous' },
        exposure: { column: 'early_mobility', reference: '0' },
        modifier: { column: 'frailty_score', type: 'continuous', centre: 'mean' },
        covariates: [{ column: 'admission_type', type: 'categorical', reference: 'elective' }],
        model: 'linear',
        ci: { level: 0.95, method: 'delta' },
      },
      columns,
    );
    expect(equationText(equation)).toBe(
      'E(length_of_stay_days) = β0 + β1·early_mobility + β2·(frailty_score − mean) + β3·early_mobility×(frailty_score − mean) + β4·[admission_type = emergency]',
    );
    expect(equation.link).toBe('identity');
  });

  it('collapses a covariate with many levels into a numbered range', () => {
    const columns = [...CALL_BACK, column('ward', 'categorical', ['A', 'B', 'C', 'D', 'E', 'F'])];
    const result = draftToSpec(columns, { ...callBackDraft(), covariates: ['ward'], covariateReferences: { ward: 'A' } });
    if (!result.ok) throw new Error('draft should convert');
    // β8–12: five indicators for the six wards after β0-β7.
    expect(equationText(modelEquation(result.spec, columns))).toMatch(/ \+ β8–12·\[ward = each level ≠ A\]$/);
  });
});
