import {
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
import { markMissingRows, scanColumn } from './columnScan.js';
import { getColumn, refuseText, rowPlace, warnDropped, warnSuspectLevels } from './frameChecks.js';
import { checkCountOutcome, codeFrameExtras, extraColumnNames, type FrameExtras } from './frameExtras.js';
import { orderByScore } from './orderedLevels.js';

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
  /** Rows missing in each used column that has any (a row may count under several columns). */
  readonly missingByColumn: { column: string; rows: number }[];
  /** Original row index of each analysed row. */
  readonly rowIndex: Int32Array;
  readonly outcome: Float64Array;
  readonly outcomeColumn: string;
  readonly outcomeBinary: boolean;
  readonly eventLevel: string | null;
  /** 0/1 intervention codes; all 0 for a continuous intervention (use exposureValues). */
  readonly exposure: Uint8Array;
  /** A continuous intervention (dose): its values; null for a binary one. */
  readonly exposureValues: Float64Array | null;
  readonly exposureColumn: string;
  /** [reference, non-reference]. */
  readonly exposureLevels: readonly [string, string];
  readonly modifier: FrameVariable;
  readonly covariates: readonly FrameVariable[];
  readonly warnings: EngineWarning[];
  /** Clusters and person-time (frameExtras.ts); absent in frames built by hand. */
  readonly extras?: FrameExtras;
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

/**
 * Writes the exposure code of every kept row into `out` (0 for the reference, 1 otherwise)
 * and returns the levels present, as presentLevels gives them. A numeric column with a
 * third distinct value stops the shortcut: its levels are then listed by presentLevels,
 * for the error that follows.
 */
function codeExposure(column: EngineColumn, reference: string, rows: Int32Array, allRows: boolean, out: Uint8Array): string[] {
  const n = rows.length;
  if (column.kind === 'categorical') {
    const referenceCode = column.levels.indexOf(reference);
    const codes = column.codes;
    const seen = new Uint8Array(column.levels.length);
    for (let i = 0; i < n; i++) {
      const code = codes[allRows ? i : rows[i]];
      seen[code] = 1;
      out[i] = +(code !== referenceCode); // a number, not a branch (see below)
    }
    return column.levels.filter((_, code) => seen[code] === 1);
  }
  const referenceValue = Number(reference);
  const values = column.values;
  const first = values[rows[0]];
  let second = first;
  let distinct = 1;
  for (let i = 0; i < n; i++) {
    const value = values[allRows ? i : rows[i]];
    // Comparisons turned into numbers, not branches: the exposure of consecutive rows is
    // as good as random, and a mispredicted branch per row costs more than the rest.
    out[i] = +(value !== referenceValue);
    if ((+(value !== first) & +(value !== second)) !== 0) {
      if (distinct === 2) return presentLevels(column, rows);
      second = value;
      distinct = 2;
    }
  }
  const levels = distinct === 1 ? [first] : [first, second];
  return levels.sort((a, b) => a - b).map(numberLevel);
}

/** Rows per stored code of a categorical column over the kept rows. */
function countCodes(codes: Int32Array, levelCount: number, rows: Int32Array, allRows: boolean): Int32Array {
  const counts = new Int32Array(levelCount);
  for (let i = 0; i < rows.length; i++) counts[codes[allRows ? i : rows[i]]]++;
  return counts;
}

function codeFactor(
  column: EngineColumn,
  name: string,
  rows: Int32Array,
  reference: string | undefined,
  role: 'modifier' | 'covariate',
  warnings: EngineWarning[],
  allRows: boolean,
): CodedFactor {
  // A categorical column is counted per stored code in one pass; the counts give the levels
  // present (as presentLevels would) and, after recoding, the rows per level.
  const storedCounts = column.kind === 'categorical' ? countCodes(column.codes, column.levels.length, rows, allRows) : null;
  const declared = column.kind === 'categorical' ? [...column.levels] : presentLevels(column, rows);
  const present = column.kind === 'categorical' ? column.levels.filter((_, code) => (storedCounts as Int32Array)[code] > 0) : presentLevels(column, rows);
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
  warnSuspectLevels(name, present, warnings);
  const levels = [referenceLevel, ...present.filter((level) => level !== referenceLevel)];
  const lookup = new Map(levels.map((level, code) => [level, code]));
  const counts = new Int32Array(levels.length);
  if (column.kind === 'categorical') {
    const codeMap = new Int32Array(column.levels.length).fill(-1);
    let identity = true;
    column.levels.forEach((level, code) => {
      const mapped = lookup.get(level);
      if (mapped !== undefined) {
        codeMap[code] = mapped;
        counts[mapped] = (storedCounts as Int32Array)[code];
        if (mapped !== code) identity = false;
      }
    });
    // Stored codes that already are the reference-first codes, on every row, are used as
    // they are (read only), saving a copy.
    if (identity && allRows) return { kind: 'categorical', column: name, levels, codes: column.codes, counts };
    const codes = new Int32Array(rows.length);
    const stored = column.codes;
    for (let i = 0; i < rows.length; i++) codes[i] = codeMap[stored[allRows ? i : rows[i]]];
    return { kind: 'categorical', column: name, levels, codes, counts };
  }
  const codes = new Int32Array(rows.length);
  const numericLookup = new Map<number, number>();
  for (const [level, code] of lookup) numericLookup.set(Number(level), code);
  for (let i = 0; i < rows.length; i++) {
    const value = column.values[rows[i]];
    const code = numericLookup.get(value === 0 ? 0 : value) as number;
    codes[i] = code;
    counts[code]++;
  }
  return { kind: 'categorical', column: name, levels, codes, counts };
}

function numericVariable(
  data: EngineData,
  column: EngineColumn,
  name: string,
  rows: Int32Array,
  allRows: boolean,
  knownFinite: boolean,
): NumericVariable {
  if (column.kind !== 'numeric') refuseText(data, column, name, 'to be used as a continuous variable');
  // With no row dropped the column is used as is (read only), saving a copy per column;
  // when its values are known to be finite, only constancy is left to check.
  const source = column.values;
  if (allRows && knownFinite) {
    const first = source[0];
    for (let i = 1; i < source.length; i++) if (source[i] !== first) return { kind: 'continuous', column: name, values: source };
    throw new ConstantColumnError(name);
  }
  const values = allRows ? source : new Float64Array(rows.length);
  const first = source[rows[0]];
  let constant = true;
  for (let i = 0; i < rows.length; i++) {
    const value = allRows ? source[i] : source[rows[i]];
    if (value - value !== 0) {
      throw new InvalidDataError(`The column "${name}" holds a non-finite value on ${rowPlace(data, rows[i])}.`, { column: name });
    }
    if (!allRows) values[i] = value;
    if (constant && value !== first) constant = false;
  }
  if (constant) throw new ConstantColumnError(name);
  return { kind: 'continuous', column: name, values };
}

function codeModifier(
  data: EngineData, spec: AnalysisSpec, column: EngineColumn, rows: Int32Array, allRows: boolean, finite: boolean, warnings: EngineWarning[],
): FrameVariable {
  if (spec.modifier.type !== 'categorical') return numericVariable(data, column, spec.modifier.column, rows, allRows, finite);
  const factor = codeFactor(column, spec.modifier.column, rows, spec.modifier.reference, 'modifier', warnings, allRows);
  return spec.modifier.ordered === undefined ? factor : orderByScore(factor, spec.modifier.ordered.scores);
}

function codeCovariates(
  data: EngineData, spec: AnalysisSpec, columns: EngineColumn[], rows: Int32Array, allRows: boolean, finite: boolean[], warnings: EngineWarning[],
): FrameVariable[] {
  return spec.covariates.map((covariate, index) => {
    const column = columns[3 + index];
    return covariate.type === 'categorical'
      ? codeFactor(column, covariate.column, rows, covariate.reference, 'covariate', warnings, allRows)
      : numericVariable(data, column, covariate.column, rows, allRows, finite[3 + index]);
  });
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
  const extraNames = extraColumnNames(spec, used);
  const columns = [...used, ...extraNames].map((name) => getColumn(data, name));

  // Most extracts have no missing value in the used columns: a read-only scan per column
  // finds that out, and then every column is used in place (no row list, no copies). Only
  // when a row is missing are rows marked column by column and the rest kept.
  let anyMissing = false;
  const finite = columns.map(() => false);
  for (let index = 0; index < columns.length && !anyMissing; index++) {
    const scan = scanColumn(columns[index], data.rowCount);
    anyMissing = scan.missing;
    finite[index] = scan.finite;
  }
  let kept = data.rowCount;
  let rowIndex: Int32Array;
  const missingByColumn: { column: string; rows: number }[] = [];
  if (anyMissing) {
    const missingRow = new Uint8Array(data.rowCount);
    columns.forEach((column, index) => {
      const rows = markMissingRows(column, data.rowCount, missingRow);
      if (rows > 0) missingByColumn.push({ column: [...used, ...extraNames][index], rows });
    });
    kept = 0;
    const keep = new Int32Array(data.rowCount);
    for (let row = 0; row < data.rowCount; row++) if (missingRow[row] === 0) keep[kept++] = row;
    if (kept === 0) throw new NoCompleteRowsError();
    rowIndex = keep.slice(0, kept);
  } else {
    if (kept === 0) throw new NoCompleteRowsError();
    rowIndex = new Int32Array(kept);
    for (let row = 0; row < kept; row++) rowIndex[row] = row;
  }
  const allRows = kept === data.rowCount;

  // Outcome.
  const outcomeColumn = columns[0];
  const outcomeName = spec.outcome.column;
  // A numeric outcome with every row kept is used as is (read only), like continuous
  // variables: one check, no copy.
  const outcomeInPlace = allRows && outcomeColumn.kind === 'numeric';
  const outcome = outcomeInPlace ? outcomeColumn.values : new Float64Array(kept);
  const binaryModel = spec.model !== 'linear' && spec.model !== 'poisson';
  const outcomeBinary = spec.outcome.type === 'binary';
  if (binaryModel && !outcomeBinary) {
    throw new InvalidSpecError(`The ${spec.model} model needs a binary outcome; "${outcomeName}" is declared continuous.`, { column: outcomeName });
  }
  let eventLevel: string | null = null;
  if (outcomeBinary) {
    if (outcomeColumn.kind === 'numeric') {
      const values = outcomeColumn.values;
      if (outcomeInPlace) {
        // Checked without a branch per row (outcomes alternate unpredictably); the first
        // offending value is looked up only when there is one.
        let other = 0;
        for (let i = 0; i < kept; i++) {
          const value = values[i];
          other |= +(value !== 0) & +(value !== 1);
        }
        if (other !== 0) {
          for (let i = 0; i < kept; i++) {
            const value = values[i];
            if (value !== 0 && value !== 1) throw new OutcomeNotBinaryError(outcomeName, numberLevel(value));
          }
        }
      } else {
        for (let i = 0; i < kept; i++) {
          const value = values[rowIndex[i]];
          if (value !== 0 && value !== 1) throw new OutcomeNotBinaryError(outcomeName, numberLevel(value));
          outcome[i] = value;
        }
      }
      eventLevel = '1';
    } else {
      const present = presentLevels(outcomeColumn, rowIndex);
      if (present.length > 2) throw new OutcomeNotBinaryError(outcomeName, present[2]);
      warnSuspectLevels(outcomeName, present, warnings);
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
    if (outcomeColumn.kind !== 'numeric') refuseText(data, outcomeColumn, outcomeName, 'for a continuous outcome');
    for (let i = 0; i < kept; i++) {
      const value = outcomeColumn.values[rowIndex[i]];
      if (!Number.isFinite(value)) throw new InvalidDataError(`The outcome "${outcomeName}" holds a non-finite value on ${rowPlace(data, rowIndex[i])}.`, { column: outcomeName });
      if (!outcomeInPlace) outcome[i] = value;
    }
    if (spec.outcome.type === 'count') checkCountOutcome(data, outcome, rowIndex, outcomeName);
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

  // Exposure: exactly two levels, the reference coded 0; or a continuous dose, as is.
  const exposureColumn = columns[1];
  const exposureName = spec.exposure.column;
  const exposure = new Uint8Array(kept);
  if (spec.exposure.type === 'continuous') {
    const dose = numericVariable(data, exposureColumn, exposureName, rowIndex, allRows, finite[1]).values;
    const modifier = codeModifier(data, spec, columns[2], rowIndex, allRows, finite[2], warnings);
    const covariates = codeCovariates(data, spec, columns, rowIndex, allRows, finite, warnings);
    warnDropped(data.rowCount, kept, missingByColumn, warnings);
    return {
      n: kept, dropped: data.rowCount - kept, missingByColumn, rowIndex, outcome, outcomeColumn: outcomeName, outcomeBinary, eventLevel,
      exposure, exposureValues: dose, exposureColumn: exposureName, exposureLevels: ['', ''], modifier, covariates, warnings,
    };
  }
  const reference = spec.exposure.reference ?? '';
  // Coded and its levels found in one pass; the checks below then run on the levels.
  const exposurePresent = codeExposure(exposureColumn, reference, rowIndex, allRows, exposure);
  const exposureDeclared = exposureColumn.kind === 'categorical' ? [...exposureColumn.levels] : exposurePresent;
  if (!exposureDeclared.includes(reference)) {
    throw new ReferenceLevelNotFoundError(exposureName, reference, exposureDeclared);
  }
  if (exposurePresent.length === 1) {
    if (exposurePresent[0] === reference) throw new ConstantColumnError(exposureName);
    throw new EmptyStratumError(exposureName, reference);
  }
  if (exposurePresent.length !== 2) throw new ExposureNotBinaryError(exposureName, exposurePresent.length);
  if (!exposurePresent.includes(reference)) throw new EmptyStratumError(exposureName, reference);
  const exposureOther = exposurePresent.find((level) => level !== reference) as string;
  warnSuspectLevels(exposureName, exposurePresent, warnings);

  const modifier = codeModifier(data, spec, columns[2], rowIndex, allRows, finite[2], warnings);
  const covariates = codeCovariates(data, spec, columns, rowIndex, allRows, finite, warnings);
  warnDropped(data.rowCount, kept, missingByColumn, warnings);

  return {
    n: kept,
    dropped: data.rowCount - kept,
    missingByColumn,
    rowIndex,
    outcome,
    outcomeColumn: outcomeName,
    outcomeBinary,
    eventLevel,
    exposure,
    exposureValues: null,
    exposureColumn: exposureName,
    exposureLevels: [reference, exposureOther],
    modifier,
    covariates,
    warnings,
    extras: codeFrameExtras(data, spec, (name) => columns[[...used, ...extraNames].indexOf(name)], rowIndex),
  };
}
