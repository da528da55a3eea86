/**
 * The form's person-time, cluster and frequency-weights fields: what converts, what the
 * form and the server refuse (with the message the analyst sees), and how the equation,
 * the plain-English specification and the audit trail name them.
 */
import { describe, expect, it } from 'vitest';
import { specChanges } from '../audit/auditWords';
import { equationText, modelEquation } from './modelEquation';
import { formChoices, reviseDraft, type SpecDraft } from './specForm';
import { specRuleProblems } from './specRules';
import { draftToSpec } from './specValidation';
import { computationSummary, specInWords } from './specWords';
import { CALL_BACK, callBackDraft, column } from './testSupport';

const COLUMNS = [
  ...CALL_BACK,
  column('falls', 'count', null, { min: 0, max: 7, mean: 0.4, sd: 0.8, median: 0 }),
  column('bed_days', 'continuous', null, { min: 1, max: 60, mean: 8, sd: 6, median: 6 }),
  column('patients', 'count', null, { min: 1, max: 40, mean: 6, sd: 5, median: 4 }),
  column('zero_or_more', 'count', null, { min: 0, max: 9, mean: 2, sd: 2, median: 2 }),
];

/** A falls-per-bed-day draft: count outcome, Poisson, person-time bed_days. */
function ratesDraft(change: Partial<SpecDraft> = {}): SpecDraft {
  let draft = reviseDraft(COLUMNS, callBackDraft(), { outcome: { type: 'count', column: 'falls', event: '', personTime: 'bed_days' }, model: 'poisson', effectMeasure: 'RR' });
  draft = reviseDraft(COLUMNS, draft, change);
  return draft;
}

describe('rates, clusters and weights on the analysis form', () => {
  it('converts a rate model with clusters and weights, and writes the offset, weights and variance into the equation', () => {
    const converted = draftToSpec(COLUMNS, ratesDraft({ cluster: 'site', weights: 'patients' }));
    expect(converted.ok).toBe(true);
    if (!converted.ok) return;
    expect(converted.spec.outcome).toEqual({ column: 'falls', type: 'count', personTime: 'bed_days' });
    expect(converted.spec.cluster).toEqual({ column: 'site' });
    expect(converted.spec.weights).toEqual({ column: 'patients' });
    const equation = modelEquation(converted.spec, COLUMNS);
    expect(equationText(equation).startsWith('log(E(falls)) = log(bed_days) + β0 + β1·call_back')).toBe(true);
    expect(equation.notes.join(' ')).toMatch(/log\(bed_days\) is an offset.*Each row counts as patients identical rows.*cluster-robust \(CR1, Liang and Zeger 1986\), with clusters given by site/);
    expect(specInWords(converted.spec)).toMatch(/effects as rate ratios; rates per bed_days \(log person-time as offset\); cluster-robust \(CR1\) standard errors by site; each row weighted by patients/);
    expect(computationSummary(converted.spec, COLUMNS).map((item) => item.title)).toEqual(expect.arrayContaining(['Rates and overdispersion', 'Cluster-robust standard errors', 'Frequency weights']));
  });

  it('refuses a cluster column that is the modifier or the intervention, with the reason', () => {
    const modifier = draftToSpec(COLUMNS, ratesDraft({ cluster: 'age_band' }));
    expect(modifier.ok ? null : modifier.errors.cluster).toBe('The cluster column cannot be the modifier; choose the site or ward the rows belong to.');
    const intervention = draftToSpec(COLUMNS, ratesDraft({ cluster: 'call_back' }));
    expect(intervention.ok ? null : intervention.errors.cluster).toBe('The cluster column cannot be the intervention; choose the site or ward the rows belong to.');
    const bootstrap = draftToSpec(COLUMNS, ratesDraft({ cluster: 'site', ciMethod: 'bootstrap' }));
    expect(bootstrap.ok ? null : bootstrap.errors.cluster).toMatch(/bootstrap resamples rows and would ignore clusters/);
  });

  it('refuses weights that are not positive whole numbers and person-time that is not positive', () => {
    const continuous = draftToSpec(COLUMNS, ratesDraft({ weights: 'length_of_stay_days' }));
    expect(continuous.ok ? null : continuous.errors.weights).toBe('length_of_stay_days is not a count column; frequency weights are positive whole numbers.');
    const zero = draftToSpec(COLUMNS, ratesDraft({ weights: 'zero_or_more' }));
    expect(zero.ok ? null : zero.errors.weights).toBe('zero_or_more holds 0; frequency weights must be positive whole numbers (1 or more).');
    const time = draftToSpec(COLUMNS, ratesDraft({ outcome: { type: 'count', column: 'falls', event: '', personTime: 'zero_or_more' } }));
    expect(time.ok ? null : time.errors['outcome.personTime']).toMatch(/zero_or_more holds 0; person-time must be positive/);
    const choices = formChoices(COLUMNS, ratesDraft());
    expect(choices.extras.weights.find((c) => c.name === 'zero_or_more')?.disabledReason).toMatch(/positive whole numbers/);
    expect(choices.extras.weights.find((c) => c.name === 'patients')?.disabledReason).toBeUndefined();
  });

  it('has the server refuse person-time with a binary outcome or another model (the same rule check as the form)', () => {
    const base = { effectMeasure: 'RR' as const, exposure: { column: 'call_back', reference: '0' } };
    expect(specRuleProblems({ ...base, outcome: { column: 'readmitted_30d', type: 'binary', personTime: 'bed_days' }, model: 'log-binomial' })).toContainEqual({
      path: 'spec.outcome.personTime', message: 'Person-time applies only to a count outcome.',
    });
    expect(specRuleProblems({ ...base, outcome: { column: 'falls', type: 'count', personTime: 'bed_days' }, model: 'modified-poisson' }).map((p) => p.message)).toEqual([
      'A count outcome needs the Poisson model.',
      'Person-time needs the Poisson model.',
    ]);
  });

  it('names the changed fields in the audit trail', () => {
    expect(specChanges({ spec: { model: 'modified-poisson' } }, { spec: { model: 'poisson', cluster: { column: 'site' }, weights: { column: 'patients' } } })).toEqual([
      'the model from modified Poisson to Poisson (counts and rates)',
      'the cluster column from none to site',
      'the frequency-weights column from none to patients',
    ]);
  });
});
