/**
 * What a failed run tells people. The engine's own codes (UPPER_SNAKE, src/engine/errors.ts)
 * stay inside the engine; a stored failure carries a code of the product's one vocabulary
 * (kebab-case, as AppError's) and a message written for the analyst. Anything that is not
 * an engine refusal (a database error, a bug) is never shown as it is: the run stores a
 * generic message with a reference, and the worker logs the error with its stack.
 */
import { EngineError, type EngineErrorCode } from '@/engine';

export interface RunFailure {
  code: string;
  message: string;
}

/** The product's code for each engine refusal. */
const ENGINE_CODES: Record<EngineErrorCode, string> = {
  INVALID_SPEC: 'invalid-specification',
  COLUMN_NOT_FOUND: 'column-not-found',
  COLUMN_TYPE_MISMATCH: 'column-type-mismatch',
  OUTCOME_NOT_BINARY: 'outcome-not-binary',
  EXPOSURE_NOT_BINARY: 'intervention-not-binary',
  REFERENCE_LEVEL_NOT_FOUND: 'reference-level-not-found',
  EMPTY_STRATUM: 'empty-subgroup',
  CONSTANT_COLUMN: 'constant-column',
  SINGULAR_DESIGN: 'redundant-terms',
  NO_COMPLETE_ROWS: 'no-complete-rows',
  FIT_FAILED: 'model-did-not-fit',
  INVALID_DATA: 'invalid-data',
  CANCELLED: 'cancelled',
};

/** The code of anything that is not a refusal of the data or specification. */
export const INTERNAL_ERROR = 'internal-error';

/** The product's code for an engine refusal (also what the engine command prints). */
export function productCode(engineCode: EngineErrorCode): string {
  return ENGINE_CODES[engineCode];
}

/** The failure a run stores and shows, for an error thrown while it ran. */
export function runFailure(error: unknown, runId: string): RunFailure {
  if (error instanceof EngineError) {
    // The engine words its refusals for people and names the column and level concerned.
    return { code: productCode(error.code), message: error.message };
  }
  return {
    code: INTERNAL_ERROR,
    message:
      `The analysis stopped because of a problem on our side, not in your data or specification. ` +
      `It has been logged under reference ${runId}. Nothing partial was kept; start a new run, ` +
      `and if it fails again, give that reference to your administrator.`,
  };
}

/** True when the failure came from the data or specification, not from Crossgrain itself. */
export const isRefusal = (failure: RunFailure): boolean => failure.code !== INTERNAL_ERROR;
