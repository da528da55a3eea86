/**
 * The form tests' columns: the Call-back demo extract's dictionary (column names and types
 * as demoCohorts.ts writes them) plus two extra columns, and a draft filled the way an
 * analyst would. Not imported by product code.
 */
import type { FormColumn } from './formColumns';
import { defaultDraft, reviseDraft, type SpecDraft } from './specForm';

export function column(name: string, type: FormColumn['type'], levels: string[] | null, numeric: FormColumn['numeric'] = null, description = ''): FormColumn {
  return { name, type, description, levels, levelsTruncated: false, numeric };
}

export const CALL_BACK: FormColumn[] = [
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
export function callBackDraft(): SpecDraft {
  let draft = defaultDraft().spec;
  draft = reviseDraft(CALL_BACK, draft, { outcome: { ...draft.outcome, column: 'readmitted_30d' } });
  draft = reviseDraft(CALL_BACK, draft, { exposure: { ...draft.exposure, column: 'call_back' } });
  draft = reviseDraft(CALL_BACK, draft, { modifier: { ...draft.modifier, column: 'age_band' } });
  draft = reviseDraft(CALL_BACK, draft, { covariates: ['sex', 'comorbidity_score', 'site'] });
  return draft;
}
