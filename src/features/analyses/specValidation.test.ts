import { describe, expect, it } from 'vitest';
import { SpecSchema } from '@/engine/boundary/schemas';
import { defaultDraft, reviseDraft, specToDraft } from './specForm';
import { draftToSpec, fieldForServerPath, validateAnalysis } from './specValidation';
import { CALL_BACK, callBackDraft } from './testSupport';

describe('validation', () => {
  it('names every missing choice under its field path', () => {
    const errors = validateAnalysis(CALL_BACK, defaultDraft());
    expect(Object.keys(errors).sort()).toEqual(['exposure.column', 'modifier.column', 'outcome.column', 'question', 'title']);
  });

  it('reports a missing modifier reference as modifier.reference', () => {
    const draft = callBackDraft();
    const result = draftToSpec(CALL_BACK, { ...draft, modifier: { ...draft.modifier, reference: '' } });
    expect(result.ok).toBe(false);
    if (!result.ok) expect(result.errors).toEqual({ 'modifier.reference': 'Choose the reference level of the modifier.' });
  });

  it('checks the bootstrap fields only for the bootstrap', () => {
    const draft = { ...callBackDraft(), replicates: '50', seed: '-1' };
    expect(draftToSpec(CALL_BACK, draft).ok).toBe(true);
    const result = draftToSpec(CALL_BACK, { ...draft, ciMethod: 'bootstrap' });
    expect(result.ok).toBe(false);
    if (!result.ok) expect(Object.keys(result.errors).sort()).toEqual(['ci.replicates', 'ci.seed']);
  });

  it('refuses levels, alphas and measures out of bounds', () => {
    const result = draftToSpec(CALL_BACK, { ...callBackDraft(), ciLevel: '100', alpha: '0.5', effectMeasure: 'MD' });
    expect(result.ok).toBe(false);
    if (!result.ok) expect(Object.keys(result.errors).sort()).toEqual(['alpha', 'ci.level', 'effectMeasure']);
  });

  it('refuses an intervention without two levels and simple-slope values outside the observed range', () => {
    const bad = reviseDraft(CALL_BACK, callBackDraft(), { exposure: { column: 'site', reference: '', type: 'binary' } });
    const result = draftToSpec(CALL_BACK, bad);
    expect(!result.ok && result.errors['exposure.column']).toBe('The intervention needs exactly two levels; site has 3.');
    const draft = callBackDraft();
    const slopes = reviseDraft(CALL_BACK, draft, { modifier: { ...draft.modifier, column: 'comorbidity_score', slopes: 'values', slopeList: '1, 5, 12' } });
    const slopeResult = draftToSpec(CALL_BACK, slopes);
    // comorbidity_score's profile range is 0 to 10, so only 12 is outside it.
    expect(!slopeResult.ok && slopeResult.errors['modifier.slopesAt']).toBe('12 lies outside the observed range (0 to 10).');
  });

  it('writes values clinicians name, keeps the names through editing, and refuses an item without a number', () => {
    const draft = callBackDraft();
    const named = reviseDraft(CALL_BACK, draft, { modifier: { ...draft.modifier, column: 'comorbidity_score', slopes: 'values', slopeList: '2 = mild, 5 = moderate; 8' } });
    const result = draftToSpec(CALL_BACK, named);
    expect(result.ok && result.spec.modifier.slopesAt).toEqual({ kind: 'values', values: [2, 5, 8], names: ['mild', 'moderate', ''] });
    if (result.ok) {
      expect(SpecSchema.safeParse(result.spec).success).toBe(true);
      expect(specToDraft(result.spec, CALL_BACK).modifier.slopeList).toBe('2 = mild, 5 = moderate, 8');
    }
    const unnamed = draftToSpec(CALL_BACK, { ...named, modifier: { ...named.modifier, slopeList: '2, 5' } });
    expect(unnamed.ok && unnamed.spec.modifier.slopesAt).toEqual({ kind: 'values', values: [2, 5] });
    const bad = draftToSpec(CALL_BACK, { ...named, modifier: { ...named.modifier, slopeList: 'mild, 5 = moderate' } });
    expect(!bad.ok && bad.errors['modifier.slopesAt']).toBe('Start each item with a number, e.g. 3 = mild, 5 = moderate.');
  });

  it('needs the event level of a text-coded binary outcome', () => {
    const draft = reviseDraft(CALL_BACK, callBackDraft(), { outcome: { type: 'binary', column: 'discharged_home', event: '' } });
    const result = draftToSpec(CALL_BACK, draft);
    expect(!result.ok && Object.keys(result.errors)).toEqual(['outcome.event']);
    const fixed = draftToSpec(CALL_BACK, { ...draft, outcome: { ...draft.outcome, event: 'no' } });
    expect(fixed.ok && fixed.spec.outcome).toEqual({ column: 'discharged_home', type: 'binary', event: 'no' });
  });

  it('maps server paths to form fields', () => {
    const converted = draftToSpec(CALL_BACK, callBackDraft());
    const spec = converted.ok ? converted.spec : undefined;
    expect(fieldForServerPath('spec.modifier.reference', spec)).toBe('modifier.reference');
    expect(fieldForServerPath('spec.covariates.2.reference', spec)).toBe('covariates.site.reference');
    expect(fieldForServerPath('spec.covariates.0', spec)).toBe('covariates');
    expect(fieldForServerPath('spec.modifier.slopesAt.values.1', spec)).toBe('modifier.slopesAt');
    expect(fieldForServerPath('title', spec)).toBe('title');
  });
});

describe('conversion to the engine specification', () => {
  it('gives a spec that parses under SpecSchema, with the form defaults', () => {
    const result = draftToSpec(CALL_BACK, callBackDraft());
    expect(result.ok).toBe(true);
    if (!result.ok) return;
    expect(SpecSchema.parse(result.spec)).toEqual(result.spec);
    expect(result.spec).toEqual({
      outcome: { column: 'readmitted_30d', type: 'binary' },
      exposure: { column: 'call_back', reference: '0' },
      modifier: { column: 'age_band', type: 'categorical', reference: '18-44' },
      covariates: [
        { column: 'sex', type: 'categorical', reference: 'F' },
        { column: 'comorbidity_score', type: 'continuous' },
        { column: 'site', type: 'categorical', reference: 'Eastholm Community' },
      ],
      model: 'logistic',
      ci: { level: 0.95, method: 'delta' },
      effectMeasure: 'OR',
      alpha: 0.05,
      multiplicity: 'holm',
      preventive: false,
    });
  });

  it('writes a continuous modifier with centring and simple-slope percentiles, and bootstrap settings', () => {
    const draft = callBackDraft();
    const revised = reviseDraft(CALL_BACK, draft, {
      modifier: { ...draft.modifier, column: 'comorbidity_score', centre: 'value', centreValue: '2', slopes: 'percentiles', slopeList: '10, 50, 90' },
      ciMethod: 'bootstrap',
      replicates: '500',
      seed: '7',
    });
    const result = draftToSpec(CALL_BACK, revised);
    expect(result.ok).toBe(true);
    if (!result.ok) return;
    expect(SpecSchema.safeParse(result.spec).success).toBe(true);
    expect(result.spec.modifier).toEqual({ column: 'comorbidity_score', type: 'continuous', centre: 2, slopesAt: { kind: 'percentiles', percentiles: [10, 50, 90] } });
    expect(result.spec.ci).toEqual({ level: 0.95, method: 'bootstrap', replicates: 500, seed: 7 });
    // The draft comes back unchanged from the spec (editing an analysis).
    const again = draftToSpec(CALL_BACK, specToDraft(result.spec, CALL_BACK));
    expect(again.ok && again.spec).toEqual(result.spec);
  });
});
