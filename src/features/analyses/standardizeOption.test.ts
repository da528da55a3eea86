import { describe, expect, it } from 'vitest';
import { modelEquation } from './modelEquation';
import { reviseDraft, specToDraft } from './specForm';
import { specRuleProblems } from './specRules';
import { draftToSpec } from './specValidation';
import { computationSummary, specInWords } from './specWords';
import { CALL_BACK, callBackDraft } from './testSupport';

describe('the "absolute effects" option (standardize)', () => {
  it('goes into the specification, the equation notes and the summary for a binary outcome with a categorical modifier', () => {
    const result = draftToSpec(CALL_BACK, { ...callBackDraft(), standardize: true });
    expect(result.ok).toBe(true);
    if (!result.ok) return;
    expect(result.spec.standardize).toBe(true);
    expect(specToDraft(result.spec, CALL_BACK).standardize).toBe(true);
    expect(modelEquation(result.spec, CALL_BACK).notes.some((note) => note.startsWith('Absolute effects: within each level m of age_band'))).toBe(true);
    expect(computationSummary(result.spec, CALL_BACK).map((item) => item.title)).toContain('Absolute effects (standardized)');
    expect(specInWords(result.spec)).toContain('standardized risks, risk differences and numbers needed to treat');
  });

  it('is left out of the specification when not asked for', () => {
    const result = draftToSpec(CALL_BACK, callBackDraft());
    expect(result.ok && result.spec.standardize).toBe(undefined);
  });

  it('is refused for a continuous outcome and for a continuous modifier, with the reason', () => {
    const continuous = reviseDraft(CALL_BACK, { ...callBackDraft(), standardize: true, model: 'linear', effectMeasure: 'MD' }, {
      outcome: { type: 'continuous', column: 'length_of_stay_days', event: '' },
    });
    const refused = draftToSpec(CALL_BACK, continuous);
    expect(!refused.ok && refused.errors.standardize).toMatch(/need a binary outcome/);
    const draft = callBackDraft();
    const banded = reviseDraft(CALL_BACK, { ...draft, standardize: true }, { modifier: { ...draft.modifier, column: 'comorbidity_score' } });
    const refusedModifier = draftToSpec(CALL_BACK, banded);
    expect(!refusedModifier.ok && refusedModifier.errors.standardize).toMatch(/categorical modifier/);
  });

  it('is refused by the rule check the server applies', () => {
    const problems = specRuleProblems({ outcome: { column: 'length_of_stay_days', type: 'continuous' }, model: 'linear', standardize: true, modifier: { column: 'age_band', type: 'categorical' } });
    expect(problems.map((problem) => problem.path)).toEqual(['spec.standardize']);
    expect(problems[0].message).toMatch(/need a binary outcome/);
  });
});
