import { describe, expect, it } from 'vitest';
import { runAnalysis } from '../index.js';
import type { AnalysisSpec, EngineData } from '../types.js';

const n = 40;
const base: EngineData = {
  rowCount: n,
  columns: {
    y: { kind: 'numeric', values: Float64Array.from({ length: n }, (_, i) => (i % 3 === 0 ? 1 : 0)) },
    a: { kind: 'numeric', values: Float64Array.from({ length: n }, (_, i) => (i % 2)) },
    m: { kind: 'categorical', codes: Int32Array.from({ length: n }, (_, i) => i % 4 < 2 ? 0 : 1), levels: ['lo', 'hi', 'never'] },
    m2: { kind: 'categorical', codes: Int32Array.from({ length: n }, (_, i) => (i * 7) % 3), levels: ['p', 'q', 'r'] },
    x: { kind: 'numeric', values: Float64Array.from({ length: n }, (_, i) => Math.sin(i)) },
    constant: { kind: 'numeric', values: new Float64Array(n).fill(2) },
    count: { kind: 'numeric', values: Float64Array.from({ length: n }, (_, i) => i % 3) },
    copy: { kind: 'numeric', values: Float64Array.from({ length: n }, (_, i) => 2 * Math.sin(i) + 1) },
  },
};
const spec: AnalysisSpec = {
  outcome: { column: 'y', type: 'binary' },
  exposure: { column: 'a', reference: '0' },
  modifier: { column: 'm2', type: 'categorical', reference: 'p' },
  covariates: [{ column: 'x', type: 'continuous' }],
  model: 'logistic',
  ci: { level: 0.95, method: 'delta' },
};

async function failure(data: EngineData, changed: Partial<AnalysisSpec>) {
  try {
    await runAnalysis(data, { ...spec, ...changed });
  } catch (error) {
    return error as { code: string; column?: string; level?: string; term?: string; message: string };
  }
  throw new Error('expected the analysis to fail');
}

describe('readable errors (issue 4 item 7)', () => {
  it('a column that does not exist', async () => {
    const error = await failure(base, { covariates: [{ column: 'age', type: 'continuous' }] });
    expect(error).toMatchObject({ code: 'COLUMN_NOT_FOUND', column: 'age' });
    expect(error.message).toContain('"age"');
  });
  it('a non-binary outcome for a binary model', async () => {
    const error = await failure(base, { outcome: { column: 'count', type: 'binary' } });
    expect(error).toMatchObject({ code: 'OUTCOME_NOT_BINARY', column: 'count', level: '2' });
  });
  it('a reference level that is not present', async () => {
    const error = await failure(base, { modifier: { column: 'm2', type: 'categorical', reference: 'z' } });
    expect(error).toMatchObject({ code: 'REFERENCE_LEVEL_NOT_FOUND', column: 'm2', level: 'z' });
    expect((await failure(base, { exposure: { column: 'a', reference: '2' } })).code).toBe('REFERENCE_LEVEL_NOT_FOUND');
  });
  it('a stratum with no observations', async () => {
    const error = await failure(base, { modifier: { column: 'm', type: 'categorical', reference: 'lo' } });
    expect(error).toMatchObject({ code: 'EMPTY_STRATUM', column: 'm', level: 'never' });
  });
  it('a constant column', async () => {
    const error = await failure(base, { covariates: [{ column: 'constant', type: 'continuous' }] });
    expect(error).toMatchObject({ code: 'CONSTANT_COLUMN', column: 'constant' });
  });
  it('a singular design names the aliased term', async () => {
    const error = await failure(base, { covariates: [{ column: 'x', type: 'continuous' }, { column: 'copy', type: 'continuous' }] });
    expect(error).toMatchObject({ code: 'SINGULAR_DESIGN', term: 'copy' });
  });
  it('a specification that does not fit the model', async () => {
    expect((await failure(base, { model: 'logistic', outcome: { column: 'x', type: 'continuous' } })).code).toBe('INVALID_SPEC');
    expect((await failure(base, { effectMeasure: 'RR' })).code).toBe('INVALID_SPEC');
    expect((await failure(base, { ci: { level: 95, method: 'delta' } })).code).toBe('INVALID_SPEC');
  });
  it('missing values are dropped and counted, never turned into NaN', async () => {
    const values = Float64Array.from(base.columns.x.kind === 'numeric' ? base.columns.x.values : []);
    values[3] = Number.NaN;
    const missing = new Uint8Array(n);
    missing[5] = 1;
    const data: EngineData = { ...base, columns: { ...base.columns, x: { kind: 'numeric', values, missing } } };
    const result = await runAnalysis(data, spec);
    expect(result.dropped).toBe(2);
    expect(result.n).toBe(n - 2);
    expect(JSON.stringify(result)).not.toMatch(/NaN|Infinity/);
    expect(result.warnings.map((w) => w.code)).toContain('ROWS_DROPPED');
  });
});
