import { describe, expect, it } from 'vitest';
import { SpecSchema } from '../../engine/boundary/schemas';
import type { ColumnProfile, DictionaryEntry } from '../extracts/extracts.schema';
import {
  computationSummary,
  defaultDraft,
  draftToSpec,
  equationText,
  fieldForServerPath,
  formChoices,
  formColumns,
  modelEquation,
  reviseDraft,
  specInWords,
  specToDraft,
  validateAnalysis,
  type FormColumn,
  type SpecDraft,
} from './specForm';

/** The Call-back demo extract's dictionary (column names and types as demoCohorts.ts writes them) plus two extra columns. */
function column(name: string, type: FormColumn['type'], levels: string[] | null, numeric: FormColumn['numeric'] = null, description = ''): FormColumn {
  return { name, type, description, levels, levelsTruncated: false, numeric };
}

const CALL_BACK: FormColumn[] = [
  column('readmitted_30d', 'binary', ['0', '1'], null, '30-day readmission'),
  column('call_back', 'binary', ['0', '1'], null, 'Call-back within 72 hours'),
  column('age_band', 'categorical', ['45-64', '65-79', '18-44', '80+']),
  column('sex', 'binary', ['F', 'M']),
  column('comorbidity_score', 'count', null, { min: 0, max: 10, mean: 2.1, sd: 1.4, median: 2 }),
  column('prior_admissions', 'count', ['0', '1', '2', '3', '4', '5', '6'], { min: 0, max: 6, mean: 0.9, sd: 1, median: 1 }),
  column('site', 'categorical', ['Tern Valley General', 'Eastholm Community', 'Ridgemoor Infirmary']),
  column('discharged_home', 'binary', ['yes', 'no']),
  column('length_of_stay_days', 'continuous', null, { min: 0.5, max: 30, mean: 5, sd: 3, median: 4 }),
];

/** Fills the draft the way an analyst would: one change at a time through reviseDraft. */
function callBackDraft(): SpecDraft {
  let draft = defaultDraft().spec;
  draft = reviseDraft(CALL_BACK, draft, { outcome: { ...draft.outcome, column: 'readmitted_30d' } });
  draft = reviseDraft(CALL_BACK, draft, { exposure: { ...draft.exposure, column: 'call_back' } });
  draft = reviseDraft(CALL_BACK, draft, { modifier: { ...draft.modifier, column: 'age_band' } });
  draft = reviseDraft(CALL_BACK, draft, { covariates: ['sex', 'comorbidity_score', 'site'] });
  return draft;
}

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
    expect(continuous.models).toEqual(['linear']);
    expect(continuous.measures).toEqual(['MD']);
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

  it('proposes reference levels and moves to linear for a continuous outcome', () => {
    const draft = callBackDraft();
    expect(draft.exposure.reference).toBe('0');
    expect(draft.modifier.reference).toBe('18-44');
    expect(draft.covariateReferences).toEqual({ sex: 'F', site: 'Eastholm Community' });
    const continuous = reviseDraft(CALL_BACK, draft, { outcome: { ...draft.outcome, type: 'continuous' } });
    expect([continuous.model, continuous.effectMeasure, continuous.outcome.column]).toEqual(['linear', 'MD', '']);
  });

  it('keeps the model and the measure consistent whichever is changed', () => {
    const draft = callBackDraft();
    expect(reviseDraft(CALL_BACK, draft, { model: 'modified-poisson' }).effectMeasure).toBe('RR');
    expect(reviseDraft(CALL_BACK, draft, { effectMeasure: 'RR' }).model).toBe('log-binomial');
    expect(reviseDraft(CALL_BACK, draft, { effectMeasure: 'RD' }).model).toBe('linear');
    // Choosing RR while already on modified Poisson keeps modified Poisson.
    const poisson = reviseDraft(CALL_BACK, draft, { model: 'modified-poisson' });
    expect(reviseDraft(CALL_BACK, poisson, { effectMeasure: 'RR' }).model).toBe('modified-poisson');
  });

  it('drops a covariate that becomes the modifier', () => {
    const draft = reviseDraft(CALL_BACK, callBackDraft(), { modifier: { ...callBackDraft().modifier, column: 'site' } });
    expect(draft.covariates).toEqual(['sex', 'comorbidity_score']);
  });
});

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
    const bad = reviseDraft(CALL_BACK, callBackDraft(), { exposure: { column: 'site', reference: '' } });
    const result = draftToSpec(CALL_BACK, bad);
    expect(!result.ok && result.errors['exposure.column']).toBe('The intervention needs exactly two levels; site has 3.');
    const draft = callBackDraft();
    const slopes = reviseDraft(CALL_BACK, draft, { modifier: { ...draft.modifier, column: 'comorbidity_score', slopes: 'values', slopeList: '1, 5, 12' } });
    const slopeResult = draftToSpec(CALL_BACK, slopes);
    // comorbidity_score's profile range is 0 to 10, so only 12 is outside it.
    expect(!slopeResult.ok && slopeResult.errors['modifier.slopesAt']).toBe('12 lies outside the observed range (0 to 10).');
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

describe('words', () => {
  it('says the specification in plain English with the short descriptions', () => {
    const result = draftToSpec(CALL_BACK, callBackDraft());
    if (!result.ok) throw new Error('draft should convert');
    expect(specInWords(result.spec, { columns: CALL_BACK })).toBe(
      'Logistic regression of 30-day readmission on Call-back within 72 hours (reference 0), its product with age_band (reference 18-44), ' +
        'adjusted for sex, comorbidity_score and site; effects as odds ratios; 95 % delta-method intervals; tests at the 5 % level; ' +
        'Holm adjustment across 4 strata.',
    );
  });

  it('names the bootstrap, the slopes and the missing adjustment', () => {
    const words = specInWords({
      outcome: { column: 'y', type: 'continuous' },
      exposure: { column: 'x', reference: 'no' },
      modifier: { column: 'm', type: 'continuous' },
      covariates: [],
      model: 'linear',
      ci: { level: 0.9, method: 'bootstrap', replicates: 5000, seed: 42 },
    });
    expect(words).toBe(
      'Linear regression of y on x (reference no), its product with m as a continuous modifier, with no adjustment for other covariates; ' +
        'effects as mean differences; 90 % percentile-bootstrap intervals from 5,000 replicates (seed 42); tests at the 10 % level; ' +
        'simple slopes at the mean and one standard deviation either side, with Johnson-Neyman boundaries.',
    );
  });

  it('lists what will be computed, with the counts that follow from the levels', () => {
    const result = draftToSpec(CALL_BACK, { ...callBackDraft(), ciMethod: 'bootstrap' });
    if (!result.ok) throw new Error('draft should convert');
    const items = computationSummary(result.spec, CALL_BACK);
    const byTitle = Object.fromEntries(items.map((item) => [item.title, item.detail]));
    // 4 age bands × 2 arms = 8 joint cells.
    expect(byTitle['Joint effects']).toMatch(/^All 8 combinations/);
    expect(byTitle['Effect within each stratum']).toContain('the 4 levels of age_band (18-44, 45-64, 65-79, 80+)');
    expect(byTitle['Interaction on the additive scale']).toContain('percentile bootstrap');
    expect(byTitle.Bootstrap).toContain('2,000 resamples with seed 1');
    expect(byTitle['Stratified tables']).toContain('Mantel-Haenszel');
  });
});
