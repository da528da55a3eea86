import { describe, expect, it } from 'vitest';
import { levelsLeftIn, toEngineData, type StoredColumn } from './engineData';

describe('stored columns for the engine, with declared missing-value codes', () => {
  const stage = Float64Array.from([1, 2, 999, 3, 2, 999]);
  const smoker = { codes: Int32Array.from([0, 1, 2, 3, 0, -1]), levels: ['no', 'Unknown', 'yes', '.'] };
  const columns: StoredColumn[] = [
    { name: 'stage', storage: 'numeric', values: stage },
    { name: 'dose', storage: 'numeric', values: stage },
    { name: 'smoker', storage: 'text', ...smoker },
  ];

  it('makes declared codes and shared tokens missing, never levels, and leaves the stored arrays as they were', () => {
    const data = toEngineData(6, columns, { stage: 'categorical', dose: 'continuous', smoker: 'categorical' }, { stage: ['999'], dose: ['999'], smoker: ['unknown'] });
    expect(data.columns.stage).toEqual({ kind: 'categorical', codes: Int32Array.from([0, 1, -1, 2, 1, -1]), levels: ['1', '2', '3'] });
    expect(data.columns.dose).toEqual({ kind: 'numeric', values: Float64Array.from([1, 2, NaN, 3, 2, NaN]) });
    expect(data.columns.smoker).toEqual({ kind: 'categorical', codes: Int32Array.from([0, -1, 1, -1, 0, -1]), levels: ['no', 'yes'] });
    expect(Array.from(stage)).toEqual([1, 2, 999, 3, 2, 999]);
    expect(Array.from(smoker.codes)).toEqual([0, 1, 2, 3, 0, -1]);
  });

  it('without declarations a numeric 999 stays a value (the analyst decides)', () => {
    const data = toEngineData(6, columns, { stage: 'categorical' });
    expect(data.columns.stage).toMatchObject({ levels: ['1', '2', '3', '999'] });
  });

  it('levels offered to the form leave out tokens and declared codes', () => {
    expect(levelsLeftIn(['1', '2', '999', 'NA', '.'], ['999'])).toEqual(['1', '2']);
    expect(levelsLeftIn(['no', 'Unknown', 'yes'], [' unknown '])).toEqual(['no', 'yes']);
  });

  it('codes a numeric column used as a category by its values in numeric order, small whole numbers or not', () => {
    const values = Float64Array.from([3, -1, 0.5, -0, 1024, 2, NaN, 3, 1023, 0]);
    const data = toEngineData(10, [{ name: 'score', storage: 'numeric', values }], { score: 'categorical' });
    // By hand: the distinct values in numeric order are -1, 0 (and -0), 0.5, 2, 3, 1023, 1024; NaN is missing.
    expect(data.columns.score).toEqual({
      kind: 'categorical',
      codes: Int32Array.from([4, 0, 2, 1, 6, 3, -1, 4, 5, 1]),
      levels: ['-1', '0', '0.5', '2', '3', '1023', '1024'],
    });
  });
});
