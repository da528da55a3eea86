/** The audit trail page's wording of one event. */
import { describe, expect, it } from 'vitest';
import { eventSummary, subjectHref } from './auditView';
import { filterInWords } from './auditExport';
import { eventWords, specChanges } from './auditWords';

// Expected sentences below are the wording this product chose (common practice: plain words, no code names).
describe('eventWords', () => {
  it('words a change of model and measure with human names, not code field names', () => {
    const words = eventWords({
      action: 'analysis.changed',
      details: {
        before: { spec: { model: 'logistic', effectMeasure: 'OR', ci: { level: 0.95, method: 'delta' } }, prespecified: true },
        after: { spec: { model: 'modified-poisson', effectMeasure: 'RR', ci: { level: 0.95, method: 'delta' } }, prespecified: true },
      },
    });
    expect(words).toBe('changed the model from logistic to modified Poisson; the effect measure from odds ratio to risk ratio');
  });

  it('names covariates by column and says when nothing changed', () => {
    expect(specChanges({ covariates: [] }, { covariates: [{ column: 'age', type: 'continuous' }, { column: 'ward', type: 'categorical' }] }))
      .toEqual(['the covariates from none to age, ward']);
    expect(eventWords({ action: 'analysis.changed', details: { before: { spec: { model: 'linear' } }, after: { spec: { model: 'linear' } } } }))
      .toBe('saved the analysis unchanged');
  });

  it('says which columns an upload left out', () => {
    const words = eventWords({
      action: 'extract.version-added',
      details: { name: 'ward-a.csv', version: 2, rows: 1200, columns: 9, droppedColumns: ['mrn', 'dob'] },
    });
    expect(words).toBe('added to extract ward-a.csv as version 2, 1,200 rows, 9 columns, leaving out columns mrn, dob');
  });

  it('names the privacy regime an upload was screened under, when the event records it', () => {
    expect(eventWords({ action: 'extract.upload-refused', details: { name: 'ward.csv', privacyRegime: 'uk', reasons: [{ message: 'Column "nhs_number" may identify people.' }] } }))
      .toBe('the upload of ward.csv was refused, under the UK anonymisation (ICO guidance, NHS data security) rules: Column "nhs_number" may identify people.');
    expect(eventWords({ action: 'extract.uploaded', details: { name: 'ward.csv', version: 1, rows: 60, columns: 4, privacyRegime: 'us-hipaa' } }))
      .toBe('uploaded extract ward.csv as version 1, 60 rows, 4 columns, under the HIPAA Safe Harbor rules');
    // Events recorded before the regime was a setting carry none, and say none.
    expect(eventWords({ action: 'extract.uploaded', details: { name: 'ward.csv', version: 1, privacyRegime: 'mars' } })).toBe('uploaded extract ward.csv as version 1');
  });

  it('quotes review notes and comments in full for auditors', () => {
    expect(eventWords({ action: 'review.signed-off', details: { from: 'submitted', to: 'signed-off', noteLength: 21, note: 'Fine for the ward brief' } }))
      .toBe('signed off: “Fine for the ward brief”');
    expect(eventWords({ action: 'review.sent-back', details: { note: 'Add age as a covariate' } })).toBe('sent the run back: “Add age as a covariate”');
    expect(eventWords({ action: 'review.submitted', details: { note: '' } })).toBe('submitted the run for review');
    expect(eventWords({ action: 'review.commented', details: { inReplyTo: 'c1', body: 'Agreed, @Priya' } })).toBe('replied to a comment: “Agreed, @Priya”');
  });

  it('words failed sign-ins and leaves unknown actions to the raw details', () => {
    expect(eventWords({ action: 'auth.sign-in-failed', details: { reason: 'wrong-password' } })).toBe('a sign-in failed: wrong password');
    expect(eventWords({ action: 'something.new', details: { a: 1 } })).toBeNull();
  });
});

describe('eventSummary', () => {
  it('cuts hashes and ids, names the caution instead of repeating it, and skips empty values', () => {
    const summary = eventSummary({
      details: { format: 'csv', specHash: 'ab'.repeat(32), cautionText: 'These are exploratory analyses…', error: null, note: '', n: 3, runId: '7258dc0b-cdfd-4bfc-a53a-3ec7dd243562' },
    });
    expect(summary).toBe('format: csv · specHash: abababababab… · caution shown · n: 3 · runId: 7258dc0b…');
  });

  it('shortens long text and objects to 80 characters', () => {
    const summary = eventSummary({ details: { filter: { action: 'run', from: '2026-01-01', subject: 'x'.repeat(100) } } });
    expect(summary.startsWith('filter: {"action":"run"')).toBe(true);
    expect(summary.length).toBe('filter: '.length + 80);
  });
});

describe('subjectHref', () => {
  it('links runs, analyses and extracts, and nothing else', () => {
    expect(subjectHref({ subjectType: 'run', subjectId: 'r1' })).toBe('/runs/r1');
    expect(subjectHref({ subjectType: 'analysis', subjectId: 'a 1' })).toBe('/analyses/a%201');
    expect(subjectHref({ subjectType: 'user', subjectId: 'u1' })).toBeUndefined();
    expect(subjectHref({ subjectType: 'run', subjectId: null })).toBeUndefined();
  });
});

describe('filterInWords', () => {
  it('names each filter, or says none', () => {
    expect(filterInWords({})).toBe('none');
    expect(filterInWords({ action: 'run', from: '2026-11-01' })).toBe('action run; from 2026-11-01');
  });
});
