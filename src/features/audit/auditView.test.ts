/** The audit trail page's wording of one event. */
import { describe, expect, it } from 'vitest';
import { eventSummary, subjectHref } from './auditView';
import { filterInWords } from './auditExport';

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
