import { describe, expect, it } from 'vitest';
import { SpecSchema, type Spec } from '@/engine/boundary/schemas';
import type { FormColumn } from './formColumns';
import { reviseScreenRow, screenErrors, toScreenSpec } from './screenDraft';
import { fullAnalysisQuery, prefillFromQuery, singleSpecs } from './screenSpecs';

const column = (name: string, type: FormColumn['type'], levels: string[] | null): FormColumn => ({ name, type, description: '', levels, levelsTruncated: false, numeric: null });
const columns: FormColumn[] = [
  column('readmitted_30d', 'binary', ['0', '1']),
  column('call_back', 'binary', ['0', '1']),
  column('age_band', 'categorical', ['18-44', '45-64', '65-79', '80+']),
  column('sex', 'binary', ['F', 'M']),
  column('comorbidity_score', 'count', null),
];
const roles = { outcome: 'readmitted_30d', exposure: 'call_back', covariates: ['comorbidity_score'] };
const single: Spec = {
  outcome: { column: 'readmitted_30d', type: 'binary' },
  exposure: { column: 'call_back', reference: '0' },
  modifier: { column: 'age_band', type: 'categorical', reference: '18-44' },
  covariates: [{ column: 'comorbidity_score', type: 'continuous' }],
  model: 'logistic',
  ci: { level: 0.95, method: 'delta' },
  standardize: true,
};

describe('the form\'s subgroup screen', () => {
  it('gives a categorical row its default reference and a continuous one none', () => {
    expect(reviseScreenRow(columns, 'age_band')).toEqual({ column: 'age_band', reference: '18-44' });
    expect(reviseScreenRow(columns, 'comorbidity_score')).toEqual({ column: 'comorbidity_score', reference: '' });
  });

  it('places each message under its row', () => {
    expect(screenErrors(columns, [{ column: 'age_band', reference: '18-44' }], roles)).toEqual({ modifiers: 'A subgroup screen needs between 2 and 12 modifiers.' });
    expect(screenErrors(columns, [{ column: 'age_band', reference: '18-44' }, { column: 'age_band', reference: '18-44' }, { column: 'call_back', reference: '0' }, { column: 'comorbidity_score', reference: '' }, { column: 'sex', reference: '' }, { column: '', reference: '' }], roles)).toEqual({
      'modifiers.1.column': '“age_band” is already listed.',
      'modifiers.2.column': 'The intervention cannot also be a modifier.',
      'modifiers.3.column': '“comorbidity_score” is a covariate; remove it from the covariates or from the screen.',
      'modifiers.4.reference': 'Choose the reference level.',
      'modifiers.5.column': 'Choose a column.',
    });
    expect(screenErrors(columns, [{ column: 'age_band', reference: '18-44' }, { column: 'sex', reference: 'F' }], roles)).toEqual({});
  });

  it('builds a screen specification the schema accepts, and one single specification per modifier back', () => {
    const screen = toScreenSpec(columns, single, [{ column: 'age_band', reference: '18-44' }, { column: 'sex', reference: 'F' }]);
    expect(SpecSchema.safeParse(screen).success).toBe(true);
    expect(screen.modifiers).toEqual([{ column: 'age_band', type: 'categorical', reference: '18-44' }, { column: 'sex', type: 'categorical', reference: 'F' }]);
    expect('modifier' in screen).toBe(false);
    expect(screen.standardize).toBeUndefined();
    expect(singleSpecs(screen).map((spec) => spec.modifier.column)).toEqual(['age_band', 'sex']);
    expect(prefillFromQuery(new URLSearchParams(fullAnalysisQuery(screen, 1)).get('from'))?.modifier).toEqual({ column: 'sex', type: 'categorical', reference: 'F' });
    expect(prefillFromQuery('{"not":"a spec"}')).toBeUndefined();
    expect(prefillFromQuery(JSON.stringify(screen))).toBeUndefined();
  });
});
