/**
 * The engine's error vocabulary. Every failure that a user can cause (a wrong column, a
 * level that is not there, data that cannot be fitted) is an `EngineError` with a stable
 * `code` and, where it applies, the column and level it concerns. The message is plain
 * English and names them, so the web app can show it as is.
 */
export type EngineErrorCode =
  | 'INVALID_SPEC'
  | 'COLUMN_NOT_FOUND'
  | 'COLUMN_TYPE_MISMATCH'
  | 'OUTCOME_NOT_BINARY'
  | 'EXPOSURE_NOT_BINARY'
  | 'REFERENCE_LEVEL_NOT_FOUND'
  | 'EMPTY_STRATUM'
  | 'CONSTANT_COLUMN'
  | 'SINGULAR_DESIGN'
  | 'NO_COMPLETE_ROWS'
  | 'FIT_FAILED'
  | 'INVALID_DATA'
  | 'CANCELLED';

export interface EngineErrorDetails {
  readonly column?: string;
  readonly level?: string;
  readonly term?: string;
}

export class EngineError extends Error {
  readonly code: EngineErrorCode;
  readonly column?: string;
  readonly level?: string;
  readonly term?: string;

  constructor(code: EngineErrorCode, message: string, details: EngineErrorDetails = {}) {
    super(message);
    this.name = 'EngineError';
    this.code = code;
    if (details.column !== undefined) this.column = details.column;
    if (details.level !== undefined) this.level = details.level;
    if (details.term !== undefined) this.term = details.term;
  }

  /** Plain JSON for the command line and the API: `{ code, message, column?, level?, term? }`. */
  toJSON(): { code: EngineErrorCode; message: string; column?: string; level?: string; term?: string } {
    return {
      code: this.code,
      message: this.message,
      ...(this.column !== undefined ? { column: this.column } : {}),
      ...(this.level !== undefined ? { level: this.level } : {}),
      ...(this.term !== undefined ? { term: this.term } : {}),
    };
  }
}

export class InvalidSpecError extends EngineError {
  constructor(message: string, details: EngineErrorDetails = {}) {
    super('INVALID_SPEC', message, details);
    this.name = 'InvalidSpecError';
  }
}

export class ColumnNotFoundError extends EngineError {
  constructor(column: string) {
    super('COLUMN_NOT_FOUND', `The column "${column}" does not exist in the data.`, { column });
    this.name = 'ColumnNotFoundError';
  }
}

export class ColumnTypeMismatchError extends EngineError {
  /** `value`: the offending text value, when one is named. */
  constructor(column: string, expected: string, value?: string) {
    super('COLUMN_TYPE_MISMATCH', `The column "${column}" must be ${expected}.`, value === undefined ? { column } : { column, level: value });
    this.name = 'ColumnTypeMismatchError';
  }
}

export class OutcomeNotBinaryError extends EngineError {
  constructor(column: string, value: string) {
    super(
      'OUTCOME_NOT_BINARY',
      `The outcome column "${column}" must hold only 0 and 1 (or two levels) for this model, but it holds the value "${value}".`,
      { column, level: value },
    );
    this.name = 'OutcomeNotBinaryError';
  }
}

export class ExposureNotBinaryError extends EngineError {
  constructor(column: string, levelCount: number) {
    super(
      'EXPOSURE_NOT_BINARY',
      `The intervention column "${column}" must have exactly two levels among the analysed rows; it has ${levelCount}.`,
      { column },
    );
    this.name = 'ExposureNotBinaryError';
  }
}

export class ReferenceLevelNotFoundError extends EngineError {
  constructor(column: string, level: string, available: readonly string[]) {
    const shown = available.slice(0, 12).map((l) => `"${l}"`).join(', ');
    super(
      'REFERENCE_LEVEL_NOT_FOUND',
      `The reference level "${level}" is not present in the column "${column}" (levels: ${shown}${available.length > 12 ? ', ...' : ''}).`,
      { column, level },
    );
    this.name = 'ReferenceLevelNotFoundError';
  }
}

export class EmptyStratumError extends EngineError {
  constructor(column: string, level: string) {
    super(
      'EMPTY_STRATUM',
      `The level "${level}" of "${column}" has no observations among the analysed rows.`,
      { column, level },
    );
    this.name = 'EmptyStratumError';
  }
}

export class ConstantColumnError extends EngineError {
  constructor(column: string) {
    super('CONSTANT_COLUMN', `The column "${column}" takes a single value among the analysed rows, so its effect cannot be estimated.`, { column });
    this.name = 'ConstantColumnError';
  }
}

export class SingularDesignError extends EngineError {
  constructor(term: string, column?: string) {
    super(
      'SINGULAR_DESIGN',
      `The model cannot be estimated: the term "${term}" is a linear combination of the other terms (the design is singular).`,
      column === undefined ? { term } : { term, column },
    );
    this.name = 'SingularDesignError';
  }
}

export class NoCompleteRowsError extends EngineError {
  constructor() {
    super('NO_COMPLETE_ROWS', 'No row has values in every column the analysis uses.');
    this.name = 'NoCompleteRowsError';
  }
}

export class FitFailedError extends EngineError {
  constructor(message: string) {
    super('FIT_FAILED', message);
    this.name = 'FitFailedError';
  }
}

export class InvalidDataError extends EngineError {
  constructor(message: string, details: EngineErrorDetails = {}) {
    super('INVALID_DATA', message, details);
    this.name = 'InvalidDataError';
  }
}

/** Thrown when the caller's AbortSignal fires; the run leaves nothing behind. */
export class AnalysisCancelledError extends EngineError {
  constructor() {
    super('CANCELLED', 'The analysis was cancelled.');
    this.name = 'AnalysisCancelledError';
  }
}
