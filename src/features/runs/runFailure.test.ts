/**
 * The failure a run stores is in the product's one vocabulary: every engine refusal has a
 * kebab-case code of its own and keeps the engine's words; anything else is generic.
 */
import { describe, expect, it } from 'vitest';
import { ColumnNotFoundError, EngineError, type EngineErrorCode } from '@/engine';
import { ERROR_CODE } from '@/lib/server/errors';
import { EXTRACT_REFUSAL_CODES } from '../extracts/extractRefusal';
import { isRefusal, runFailure } from './runFailure';

const ENGINE_CODES: EngineErrorCode[] = [
  'INVALID_SPEC', 'COLUMN_NOT_FOUND', 'COLUMN_TYPE_MISMATCH', 'OUTCOME_NOT_BINARY', 'EXPOSURE_NOT_BINARY', 'REFERENCE_LEVEL_NOT_FOUND',
  'EMPTY_STRATUM', 'CONSTANT_COLUMN', 'SINGULAR_DESIGN', 'NO_COMPLETE_ROWS', 'FIT_FAILED', 'INVALID_DATA', 'CANCELLED',
];

describe('runFailure', () => {
  it('gives every engine refusal a distinct kebab-case code and keeps its message', () => {
    const codes = ENGINE_CODES.map((code) => runFailure(new EngineError(code, `Words for ${code}.`), 'run-1'));
    for (const [i, failure] of codes.entries()) {
      expect(failure.code).toMatch(ERROR_CODE);
      expect(failure.message).toBe(`Words for ${ENGINE_CODES[i]}.`);
      expect(isRefusal(failure)).toBe(true);
    }
    expect(new Set(codes.map((c) => c.code)).size).toBe(ENGINE_CODES.length);
    expect(runFailure(new ColumnNotFoundError('ward'), 'run-1')).toEqual({ code: 'column-not-found', message: 'The column "ward" does not exist in the data.' });
  });

  it('hides any other error behind a generic message that names the run', () => {
    const failure = runFailure(new Error('relation "extract_columns" does not exist'), 'run-42');
    expect(failure.code).toBe('internal-error');
    expect(failure.message).toContain('run-42');
    expect(failure.message).not.toContain('extract_columns');
    expect(isRefusal(failure)).toBe(false);
  });

  it('shares its code style with the extract refusals', () => {
    for (const code of EXTRACT_REFUSAL_CODES) expect(code).toMatch(ERROR_CODE);
  });
});
