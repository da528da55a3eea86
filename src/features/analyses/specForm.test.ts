import { describe, expect, it } from 'vitest';
import type { ColumnProfile, DictionaryEntry } from '../extracts/extracts.schema';
import { formColumns } from './formColumns';
import { defaultDraft, formChoices, reviseDraft } from './specForm';
import { CALL_BACK, callBackDraft } from './testSupport';

describe('formColumns', () => {
  it('joins the dictionary with the profile levels and numeric summary', () => {
    const dictionary: DictionaryEntry[] = [
      { name: 'a', type: 'binary', description: 'A flag' },
      { name: 'b', type: 'continuous', description: '' },
    ];
    const profile = [
      { name: 'a', levels: [{ value: '0', count: 3 }, { value: '1', count: 2 }], levelsTruncated: false, numeric: null },
      { name: 'b', levels: null, levelsTruncated: false, numeric: { min: 1, max: 9, mean: 4, sd: 2, q1: 2, median: 4, q3: 6, quantileDefinition: 'hyndman-fan-7', integerValued: false } },
    ] as unknown as ColumnProfile[];
    expect(formColumns(dictionary, profile)).toEqual([
      { name: 'a', type: 'binary', description: 'A flag', levels: ['0', '1'], levelsTruncated: false, numeric: null },
      { name: 'b', type: 'continuous', description: '', levels: null, levelsTruncated: false, numeric: { min: 1, max: 9, mean: 4, sd: 2, median: 4 } },
    ]);
  });
});

describe('formChoices', () => {
  it('offers only binary columns for a binary outcome and continuous or count columns for a continuous one', () => {
    const binary = formChoices(CALL_BACK, defaultDraft().spec);
    expect(binary.outcomes.map((c) => c.name)).toEqual(['readmitted_30d', 'call_back', 'sex', 'discharged_home']);
    const continuous = formChoices(CALL_BACK, { ...defaultDraft().spec, outcome: { type: 'continuous', column: '', event: '' } });
    expect(continuous.outcomes.map((c) => c.name)).toEqual(['comorbidity_score', 'prior_admissions', 'length_of_stay_days']);
    expect(continuous.models.filter((m) => !m.disabledReason).map((m) => m.value)).toEqual(['linear']);
  });

  it('offers binary and categorical interventions, disabling those without exactly two levels', () => {
    const choices = formChoices(CALL_BACK, callBackDraft());
    const interventions = Object.fromEntries(choices.interventions.map((c) => [c.name, c.disabledReason ?? null]));
    expect(Object.keys(interventions)).toEqual(['call_back', 'age_band', 'sex', 'site', 'discharged_home']);
    expect(interventions.call_back).toBeNull();
    expect(interventions.age_band).toBe('needs exactly two levels (has 4)');
    expect(interventions.site).toBe('needs exactly two levels (has 3)');
    expect(choices.exposureReferences).toEqual(['0', '1']);
  });

  it('types the modifier and orders its reference choices naturally; covariates exclude every role', () => {
    const choices = formChoices(CALL_BACK, callBackDraft());
    expect(choices.modifierType).toBe('categorical');
    expect(choices.modifierReferences).toEqual(['18-44', '45-64', '65-79', '80+']);
    expect(choices.modifiers.map((c) => c.name)).not.toContain('readmitted_30d');
    expect(choices.modifiers.map((c) => c.name)).not.toContain('call_back');
    expect(choices.covariates.map((c) => c.name)).toEqual(['sex', 'comorbidity_score', 'prior_admissions', 'site', 'discharged_home', 'length_of_stay_days']);
    expect(choices.covariates.find((c) => c.name === 'comorbidity_score')?.kind).toBe('continuous');
    const continuous = formChoices(CALL_BACK, reviseDraft(CALL_BACK, callBackDraft(), { modifier: { ...callBackDraft().modifier, column: 'comorbidity_score' } }));
    expect(continuous.modifierType).toBe('continuous');
    expect(continuous.modifierReferences).toEqual([]);
  });

  it('asks for the event level only when a binary outcome is not coded 0/1', () => {
    expect(formChoices(CALL_BACK, callBackDraft()).eventLevels).toEqual([]);
    const draft = reviseDraft(CALL_BACK, callBackDraft(), { outcome: { type: 'binary', column: 'discharged_home', event: '' } });
    expect(formChoices(CALL_BACK, draft).eventLevels).toEqual(['no', 'yes']);
  });
});

describe('defaults and revisions', () => {
  it('starts with logistic, odds ratios, delta method, 95 %, alpha 0.05, Holm, 2000 replicates and seed 1', () => {
    const spec = defaultDraft().spec;
    expect([spec.model, spec.effectMeasure, spec.ciMethod, spec.ciLevel, spec.alpha, spec.multiplicity, spec.replicates, spec.seed, spec.preventive]).toEqual([
      'logistic', 'OR', 'delta', '95', '0.05', 'holm', '2000', '1', false,
    ]);
  });

  it('proposes reference levels, and leaves the model and measure alone when the outcome type changes', () => {
    const draft = callBackDraft();
    expect(draft.exposure.reference).toBe('0');
    expect(draft.modifier.reference).toBe('18-44');
    expect(draft.covariateReferences).toEqual({ sex: 'F', site: 'Eastholm Community' });
    const continuous = reviseDraft(CALL_BACK, draft, { outcome: { ...draft.outcome, type: 'continuous' } });
    expect([continuous.model, continuous.effectMeasure, continuous.outcome.column]).toEqual(['logistic', 'OR', '']);
  });

  it('drops a covariate that becomes the modifier', () => {
    const draft = reviseDraft(CALL_BACK, callBackDraft(), { modifier: { ...callBackDraft().modifier, column: 'site' } });
    expect(draft.covariates).toEqual(['sex', 'comorbidity_score']);
  });
});
