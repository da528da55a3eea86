import {
  ColumnNotFoundError,
  ColumnTypeMismatchError,
  ConstantColumnError,
  EmptyStratumError,
  ExposureNotBinaryError,
  InvalidDataError,
  InvalidSpecError,
  NoCompleteRowsError,
  OutcomeNotBinaryError,
  ReferenceLevelNotFoundError,
} from '../errors.js';
import type { AnalysisSpec, EngineColumn, EngineData, EngineWarning } from '../types.js';

/** A categorical variable recoded so that code 0 is the reference level. */
export interface CodedFactor {
  readonly kind: 'categorical';
  readonly column: string;
  /** Levels present among the analysed rows, reference first, then in the column's order. */
  readonly levels: readonly string[];
  readonly codes: Int32Array;
  /** Rows per level. */
  readonly counts: Int32Array;
}

export interface NumericVariable {
  readonly kind: 'continuous';
  readonly column: string;
  readonly values: Float64Array;
}

export type FrameVariable = CodedFactor | NumericVariable;

/**
 * The complete-case rows of an analysis, with every variable coded: the outcome as 0/1 or
 * numbers, the exposure as 0/1 (1 = the non-reference level), the modifier and covariates
 * as reference-coded factors or numbers.
 */
export interface AnalysisFrame {
  readonly n: number;
  readonly dropped: number;
  /** Original row index of each analysed row. */
  readonly rowIndex: Int32Array;
  readonly outcome: Float64Array;
  readonly outcomeColumn: string;
  readonly outcomeBinary: boolean;
  readonly eventLevel: string | null;
  readonly exposure: Uint8Array;
  readonly exposureColumn: string;
  /** [reference, non-reference]. */
  readonly exposureLevels: readonly [string, string];
  readonly modifier: FrameVariable;
  readonly covariates: readonly FrameVariable[];
  readonly warnings: EngineWarning[];
}

function getColumn(data: EngineData, name: string): EngineColumn {
  const column = Object.prototype.hasOwnProperty.call(data.columns, name) ? data.columns[name] : undefined;
  if (column === undefined) throw new ColumnNotFoundError(name);
  const length = column.kind === 'numeric' ? column.values.length : column.codes.length;
  if (length !== data.rowCount) {
    throw new InvalidDataError(`The column "${name}" has ${length} values but the data have ${data.rowCount} rows.`, { column: name });
  }
  if (column.missing !== undefined && column.missing.length !== data.rowCount) {
    throw new InvalidDataError(`The missing-value mask of "${name}" has the wrong length.`, { column: name });
  }
  return column;
}

/** Shortest round-trip text of a number, used as a level name for numeric columns. */
export function numberLevel(value: number): string {
  return Object.is(value, -0) ? '0' : String(value);
}

/** Distinct levels present in the kept rows, in the column's order (numbers sorted). */
function presentLevels(column: EngineColumn, rows: Int32Array): string[] {
  if (column.kind === 'categorical') {
    const seen = new Uint8Array(column.levels.length);
    for (let i = 0; i < rows.length; i++) seen[column.codes[rows[i]]] = 1;
    return column.levels.filter((_, code) => seen[code] === 1);
  }
  // Columns used as categories have few distinct values: a short list with a
  // last-match shortcut is much faster than a Set over millions of rows.
  const distinct: number[] = [];
  const values = column.values;
  let last = Number.NaN;
  for (let i = 0; i < rows.length; i++) {
    const value = values[rows[i]];
    if (value === last) continue;
    if (!distinct.includes(value)) {
      distinct.push(value);
      if (distinct.length > 1000) break;
    }
    last = value;
  }
  return distinct.sort((a, b) => a - b).map(numberLevel);
}

function codeFactor(
  column: EngineColumn,
  name: string,
  rows: Int32Array,
  reference: string | undefined,
  role: 'modifier' | 'covariate',
  warnings: EngineWarning[],
): CodedFactor {
  const declared = column.kind === 'categorical' ? [...column.levels] : presentLevels(column, rows);
  const present = presentLevels(column, rows);
  if (present.length > 1000) {
    throw new InvalidSpecError(`The column "${name}" has more than 1,000 distinct values; treat it as continuous.`, { column: name });
  }
  const referenceLevel = reference ?? present[0];
  if (referenceLevel === undefined) throw new NoCompleteRowsError();
  if (!declared.includes(referenceLevel)) throw new ReferenceLevelNotFoundError(name, referenceLevel, declared);
  if (!present.includes(referenceLevel)) throw new EmptyStratumError(name, referenceLevel);
  if (role === 'modifier') {
    for (const level of declared) if (!present.includes(level)) throw new EmptyStratumError(name, level);
  } else {
    for (const level of declared) {
      if (!present.includes(level)) {
        warnings.push({
          code: 'EMPTY_COVARIATE_LEVEL',
          message: `The level "${level}" of the covariate "${name}" has no analysed rows and was left out of the model.`,
          column: name,
          level,
        });
      }
    }
  }
  if (present.length < 2) throw new ConstantColumnError(name);
  const levels = [referenceLevel, ...present.filter((level) => level !== referenceLevel)];
  const lookup = new Map(levels.map((level, code) => [level, code]));
  const codes = new Int32Array(rows.length);
  const counts = new Int32Array(levels.length);
  if (column.kind === 'categorical') {
    const codeMap = new Int32Array(column.levels.length).fill(-1);
    column.levels.forEach((level, code) => {
      const mapped = lookup.get(level);
      if (mapped !== undefined) codeMap[code] = mapped;
    });
    for (let i = 0; i < rows.length; i++) {
      const code = codeMap[column.codes[rows[i]]];
      codes[i] = code;
      counts[code]++;
    }
  } else {
    const numericLookup = new Map<number, number>();
    for (const [level, code] of lookup) numericLookup.set(Number(level), code);
    for (let i = 0; i < rows.length; i++) {
      const value = column.values[rows[i]];
      const code = numericLookup.get(value === 0 ? 0 : value) as number;
      codes[i] = code;
      counts[code]++;
    }
  }
  return { kind: 'categorical', column: name, levels, codes, counts };
}

function numericVariable(column: EngineColumn, name: string, rows: Int32Array, allRows: boolean): NumericVariable {
  if (column.kind !== 'numeric') throw new ColumnTypeMismatchError(name, 'numeric to be used as a continuous variable');
  // With no row dropped the column is used as is (read only), saving a copy per column.
  const source = column.values;
  const values = allRows ? source : new Float64Array(rows.length);
  const first = source[rows[0]];
  let constant = true;
  for (let i = 0; i < rows.length; i++) {
    const value = allRows ? source[i] : source[rows[i]];
    if (value - value !== 0) {
      throw new InvalidDataError(`The column "${name}" holds a non-finite value in row ${rows[i] + 1}.`, { column: name });
    }
    if (!allRows) values[i] = value;
    if (constant && value !== first) constant = false;
  }
  if (constant) throw new ConstantColumnError(name);
  return { kind: 'continuous', column: name, values };
}

/**
 * Selects the complete-case rows of the columns a specification uses and codes every
 * variable. Rows with a missing value in any used column are dropped and counted.
 *
 * @throws ColumnNotFoundError, ColumnTypeMismatchError, OutcomeNotBinaryError,
 *   ExposureNotBinaryError, ReferenceLevelNotFoundError, EmptyStratumError,
 *   ConstantColumnError, NoCompleteRowsError, InvalidSpecError.
 */
export function buildAnalysisFrame(data: EngineData, spec: AnalysisSpec): AnalysisFrame {
  const warnings: EngineWarning[] = [];
  const used = [spec.outcome.column, spec.exposure.column, spec.modifier.column, ...spec.covariates.map((c) => c.column)];
  const seen = new Set<string>();
  for (const name of used) {
    if (seen.has(name)) throw new InvalidSpecError(`The column "${name}" is used more than once in the specification.`, { column: name });
    seen.add(name);
  }
  const columns = used.map((name) => getColumn(data, name));

  // Mark missing rows column by column (one tight loop per column), then keep the rest.
  const missingRow = new Uint8Array(data.rowCount);
  for (const column of columns) {
    if (column.missing !== undefined) {
      const mask = column.missing;
      for (let row = 0; row < data.rowCount; row++) missingRow[row] |= mask[row] === 1 ? 1 : 0;
    }
    if (column.kind === 'numeric') {
      const values = column.values;
      for (let row = 0; row < data.rowCount; row++) if (values[row] !== values[row]) missingRow[row] = 1;
    } else {
      const codes = column.codes;
      const levelCount = column.levels.length;
      for (let row = 0; row < data.rowCount; row++) {
        const code = codes[row];
        if (code < 0 || code >= levelCount) missingRow[row] = 1;
      }
    }
  }
  let kept = 0;
  const keep = new Int32Array(data.rowCount);
  for (let row = 0; row < data.rowCount; row++) if (missingRow[row] === 0) keep[kept++] = row;
  if (kept === 0) throw new NoCompleteRowsError();
  const rowIndex = keep.slice(0, kept);

  // Outcome.
  const outcomeColumn = columns[0];
  const outcomeName = spec.outcome.column;
  const outcome = new Float64Array(kept);
  const binaryModel = spec.model !== 'linear';
  const outcomeBinary = spec.outcome.type === 'binary';
  if (binaryModel && !outcomeBinary) {
    throw new InvalidSpecError(`The ${spec.model} model needs a binary outcome; "${outcomeName}" is declared continuous.`, { column: outcomeName });
  }
  let eventLevel: string | null = null;
  if (outcomeBinary) {
    if (outcomeColumn.kind === 'numeric') {
      for (let i = 0; i < kept; i++) {
        const value = outcomeColumn.values[rowIndex[i]];
        if (value !== 0 && value !== 1) throw new OutcomeNotBinaryError(outcomeName, numberLevel(value));
        outcome[i] = value;
      }
      eventLevel = '1';
    } else {
      const present = presentLevels(outcomeColumn, rowIndex);
      if (present.length > 2) throw new OutcomeNotBinaryError(outcomeName, present[2]);
      const declared = outcomeColumn.levels;
      let event = spec.outcome.event;
      if (event === undefined) {
        if (declared.length === 2 && declared.includes('0') && declared.includes('1')) event = '1';
        else if (present.length === 2 && present.includes('0') && present.includes('1')) event = '1';
        else throw new InvalidSpecError(`Name the event level of the outcome "${outcomeName}" (outcome.event).`, { column: outcomeName });
      }
      if (!declared.includes(event)) throw new ReferenceLevelNotFoundError(outcomeName, event, declared);
      const eventCode = declared.indexOf(event);
      for (let i = 0; i < kept; i++) outcome[i] = outcomeColumn.codes[rowIndex[i]] === eventCode ? 1 : 0;
      eventLevel = event;
    }
  } else {
    if (outcomeColumn.kind !== 'numeric') throw new ColumnTypeMismatchError(outcomeName, 'numeric for a continuous outcome');
    for (let i = 0; i < kept; i++) {
      const value = outcomeColumn.values[rowIndex[i]];
      if (!Number.isFinite(value)) throw new InvalidDataError(`The outcome "${outcomeName}" holds a non-finite value in row ${rowIndex[i] + 1}.`, { column: outcomeName });
      outcome[i] = value;
    }
  }
  let constantOutcome = true;
  const firstOutcome = outcome[0];
  for (let i = 1; i < kept; i++) {
    if (outcome[i] !== firstOutcome) {
      constantOutcome = false;
      break;
    }
  }
  if (constantOutcome) throw new ConstantColumnError(outcomeName);

  // Exposure: exactly two levels, the reference coded 0.
  const exposureColumn = columns[1];
  const exposureName = spec.exposure.column;
  const exposurePresent = presentLevels(exposureColumn, rowIndex);
  const exposureDeclared = exposureColumn.kind === 'categorical' ? [...exposureColumn.levels] : exposurePresent;
  if (!exposureDeclared.includes(spec.exposure.reference)) {
    throw new ReferenceLevelNotFoundError(exposureName, spec.exposure.reference, exposureDeclared);
  }
  if (exposurePresent.length === 1) {
    if (exposurePresent[0] === spec.exposure.reference) throw new ConstantColumnError(exposureName);
    throw new EmptyStratumError(exposureName, spec.exposure.reference);
  }
  if (exposurePresent.length !== 2) throw new ExposureNotBinaryError(exposureName, exposurePresent.length);
  if (!exposurePresent.includes(spec.exposure.reference)) throw new EmptyStratumError(exposureName, spec.exposure.reference);
  const exposureOther = exposurePresent.find((level) => level !== spec.exposure.reference) as string;
  const exposure = new Uint8Array(kept);
  if (exposureColumn.kind === 'numeric') {
    const referenceValue = Number(spec.exposure.reference);
    const values = exposureColumn.values;
    for (let i = 0; i < kept; i++) exposure[i] = values[rowIndex[i]] === referenceValue ? 0 : 1;
  } else {
    const referenceCode = exposureColumn.levels.indexOf(spec.exposure.reference);
    const codes = exposureColumn.codes;
    for (let i = 0; i < kept; i++) exposure[i] = codes[rowIndex[i]] === referenceCode ? 0 : 1;
  }

  // Modifier.
  const modifierColumn = columns[2];
  const modifier: FrameVariable =
    spec.modifier.type === 'categorical'
      ? codeFactor(modifierColumn, spec.modifier.column, rowIndex, spec.modifier.reference, 'modifier', warnings)
      : numericVariable(modifierColumn, spec.modifier.column, rowIndex, kept === data.rowCount);

  const covariates = spec.covariates.map((covariate, index) => {
    const column = columns[3 + index];
    return covariate.type === 'categorical'
      ? codeFactor(column, covariate.column, rowIndex, covariate.reference, 'covariate', warnings)
      : numericVariable(column, covariate.column, rowIndex, kept === data.rowCount);
  });

  if (kept < data.rowCount) {
    warnings.push({
      code: 'ROWS_DROPPED',
      message: `${data.rowCount - kept} of ${data.rowCount} rows have a missing value in a column the analysis uses and were left out.`,
    });
  }

  return {
    n: kept,
    dropped: data.rowCount - kept,
    rowIndex,
    outcome,
    outcomeColumn: outcomeName,
    outcomeBinary,
    eventLevel,
    exposure,
    exposureColumn: exposureName,
    exposureLevels: [spec.exposure.reference, exposureOther],
    modifier,
    covariates,
    warnings,
  };
}
