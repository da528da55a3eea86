import { describe, expect, it } from 'vitest';
import { runAnalysis } from '../index.js';
import type { AnalysisSpec, EngineData } from '../types.js';
import { MISSING_TOKENS, missingTokenOf, suspectMissingLevels } from './missingValues.js';

describe('the shared missing-value tokens', () => {
  it('are empty, NA, N/A, NULL, ".", "-" and NaN in any letter case, spaces around ignored', () => {
    expect(MISSING_TOKENS).toEqual(['', 'NA', 'N/A', 'NULL', '.', '-', 'NaN']);
    expect(['', ' ', 'na', ' NA ', 'n/a', 'Null', '.', '-', 'nan', 'NAN'].map(missingTokenOf)).toEqual(['', '', 'NA', 'NA', 'N/A', 'NULL', '.', '-', 'NaN', 'NaN']);
    expect(['NAs', 'none', '0', '-1', '..', 'N.A.'].map(missingTokenOf)).toEqual([null, null, null, null, null, null]);
  });

  it('suspect codes: words meaning "not known", and 9/99/999/9999 beside small numbers only', () => {
    expect(suspectMissingLevels(['north', 'south', 'Unknown'])).toEqual(['Unknown']);
    expect(suspectMissingLevels(['a', 'Not recorded', 'missing'])).toEqual(['Not recorded', 'missing']);
    expect(suspectMissingLevels(['1', '2', '3', '999'])).toEqual(['999']);
    expect(suspectMissingLevels(['1', '2', '5', '9'])).toEqual(['9']);
    // 9 among 1..9 and 99 among ages are ordinary values.
    expect(suspectMissingLevels(['1', '2', '6', '8', '9'])).toEqual([]);
    expect(suspectMissingLevels(['45', '67', '88', '99'])).toEqual([]);
    expect(suspectMissingLevels(['999'])).toEqual([]);
  });
});

// Invented rows for messages and warnings only (no number is checked against a reference).
const n = 60;
const base: EngineData = {
  rowCount: n,
  columns: {
    y: { kind: 'numeric', values: Float64Array.from({ length: n }, (_, i) => (i % 3 === 0 || i % 7 === 0 ? 1 : 0)) },
    a: { kind: 'categorical', codes: Int32Array.from({ length: n }, (_, i) => (i === 5 ? 2 : i % 2)), levels: ['no', 'yes', '.'] },
    region: { kind: 'categorical', codes: Int32Array.from({ length: n }, (_, i) => (i % 5 === 4 ? 2 : i % 4 < 2 ? 0 : 1)), levels: ['north', 'south', 'unknown'] },
    region_na: { kind: 'categorical', codes: Int32Array.from({ length: n }, (_, i) => (i % 13 === 0 ? 2 : i % 4 < 2 ? 0 : 1)), levels: ['north', 'south', 'NA'] },
    score: { kind: 'numeric', values: Float64Array.from({ length: n }, (_, i) => (i % 11 === 3 ? 999 : 1 + (i % 3))) },
    x: { kind: 'numeric', values: Float64Array.from({ length: n }, (_, i) => Math.sin(i)) },
    x_text: { kind: 'categorical', codes: Int32Array.from({ length: n }, (_, i) => (i === 17 ? 3 : i % 3)), levels: ['1.5', '2', '3.25', 'see notes'] },
  },
};
const spec: AnalysisSpec = {
  outcome: { column: 'y', type: 'binary' },
  exposure: { column: 'a', reference: 'no' },
  modifier: { column: 'region', type: 'categorical', reference: 'north' },
  covariates: [{ column: 'score', type: 'categorical', reference: '1' }],
  model: 'logistic',
  ci: { level: 0.95, method: 'delta' },
};

describe('missing values in the analysis frame', () => {
  it('warns about "unknown" in the modifier and 999 in a categorical covariate, naming them', async () => {
    const result = await runAnalysis(base, spec, { threads: 0 });
    const suspects = result.warnings.filter((w) => w.code === 'POSSIBLE_MISSING_CODE');
    expect(suspects.map((w) => [w.column, w.level])).toEqual([
      ['region', 'unknown'],
      ['score', '999'],
    ]);
    expect(suspects[0].message).toContain('declare it a missing-value code');
  });

  it('reads "." in the intervention and NA in the modifier as missing, never as levels, and counts them per column', async () => {
    const result = await runAnalysis(base, { ...spec, modifier: { column: 'region_na', type: 'categorical', reference: 'north' }, covariates: [{ column: 'x', type: 'continuous' }] }, { threads: 0 });
    const naRows = Array.from({ length: n }, (_, i) => i).filter((i) => i % 13 === 0);
    expect(result.strata.map((s) => s.level)).toEqual(['north', 'south']);
    expect(result.missingByColumn).toEqual([
      { column: 'a', rows: 1 },
      { column: 'region_na', rows: naRows.length },
    ]);
    expect(result.dropped).toBe(1 + naRows.filter((i) => i !== 5).length);
    expect(result.n + result.dropped).toBe(n);
  });

  it('a text value in a continuous covariate is named with its column and first line', async () => {
    const withLines: EngineData = { ...base, lineOfRow: (row) => row + 2 };
    await expect(runAnalysis(withLines, { ...spec, covariates: [{ column: 'x_text', type: 'continuous' }] }, { threads: 0 })).rejects.toMatchObject({
      code: 'COLUMN_TYPE_MISMATCH',
      column: 'x_text',
      level: 'see notes',
      message: expect.stringContaining('"see notes" (first on line 19)'),
    });
    await expect(runAnalysis(base, { ...spec, covariates: [{ column: 'x_text', type: 'continuous' }] }, { threads: 0 })).rejects.toMatchObject({
      message: expect.stringContaining('(first on data row 18)'),
    });
  });
});
