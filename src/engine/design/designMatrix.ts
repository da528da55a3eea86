import type { AnalysisFrame, FrameVariable } from './analysisFrame.js';

/** Role of a model term, used to find b1, b2, b3 and to name terms in messages. */
export type TermRole = 'intercept' | 'exposure' | 'modifier' | 'product' | 'covariate';

export interface DesignTerm {
  readonly name: string;
  readonly role: TermRole;
  readonly column: string | null;
  /** Level of a categorical variable this indicator stands for. */
  readonly level: string | null;
}

/**
 * A model matrix X (n × p) stored in two parts, which together give every row exactly:
 *
 * - cell terms: the intercept and the indicators of categorical variables (the exposure, a
 *   categorical modifier, the products of the two, and as many categorical covariates and
 *   few-valued continuous covariates, such as 0/1 flags, as keep the number of cells small). Their values depend only on the row's cell, the
 *   combination of those variables' levels: `cellValues[cell · q + t]` is the value of term
 *   `cellTerms[t]` in that cell, and `cellOfRow[i]` is row i's cell.
 * - free terms: everything else (continuous variables, products with a continuous
 *   modifier, indicators of further categorical covariates), row-major:
 *   `free[i · r + k]` is the value of term `freeTerms[k]` in row i.
 *
 * A fit then accumulates XᵀWX per cell for the cell block and per row only for the free
 * block, which is a fraction of the arithmetic of a dense pass (and of its memory) for
 * the designs of effect-modification analyses, which are mostly indicators.
 */
export interface DesignMatrix {
  readonly rows: number;
  /** p, the number of terms. */
  readonly columns: number;
  readonly terms: readonly DesignTerm[];
  readonly cellCount: number;
  readonly cellOfRow: Int32Array;
  readonly cellTerms: Int32Array;
  readonly cellValues: Float64Array;
  readonly freeTerms: Int32Array;
  readonly free: Float64Array;
  readonly exposureIndex: number;
  /** Modifier main-effect terms: one per non-reference level, or one for a continuous modifier. */
  readonly modifierIndices: readonly number[];
  /** Exposure × modifier products, parallel to modifierIndices (empty without interaction). */
  readonly productIndices: readonly number[];
  readonly covariateIndices: readonly number[];
  /** Value subtracted from a continuous modifier (0 when not centred or categorical). */
  readonly centre: number;
  /** Per-row offset added to the linear predictor (log person-time of a rate model); absent or null for none. */
  readonly offset?: Float64Array | null;
}

export interface DesignOptions {
  /** Include the exposure × modifier product terms (false gives the no-interaction model). */
  readonly includeProducts: boolean;
  /** Subtracted from a continuous modifier before it enters the model. */
  readonly centre: number;
  /** Allocate the row arrays on SharedArrayBuffers so worker threads can read them. */
  readonly shared?: boolean;
  /**
   * Ordered categorical modifier: one product term, intervention × score of the row's level
   * (score by level code, reference first), instead of one product per level (the test for
   * trend; methods.md, "Rates, doses, absolute effects").
   */
  readonly trendScores?: Float64Array;
}

/** Cells are capped so that the per-cell accumulators stay small and dense. */
const MAX_CELLS = 4096;
/** A continuous covariate with at most this many distinct values may join the cells. */
const MAX_DISTINCT_IN_CELL = 16;

/**
 * Sorted distinct values of a numeric column when it has at most `limit` of them, or null
 * when it has more. Stops scanning as soon as the limit is passed.
 */
function fewDistinctValues(values: Float64Array, limit: number): Float64Array | null {
  if (limit < 2) return null;
  const two = twoDistinctValues(values);
  if (two !== null) return two;
  const distinct: number[] = [];
  let last = Number.NaN;
  for (let i = 0; i < values.length; i++) {
    const value = values[i];
    if (value === last) continue; // runs and 0/1 flags mostly hit the last value seen
    last = value;
    let known = false;
    for (let k = 0; k < distinct.length; k++) {
      if (distinct[k] === value) {
        known = true;
        break;
      }
    }
    if (known) continue;
    distinct.push(value);
    if (distinct.length > limit) return null;
  }
  distinct.sort((a, b) => a - b);
  return Float64Array.from(distinct);
}

/** Rows checked between looks at whether a third value has turned up. */
const TWO_VALUE_CHUNK = 4096;

/**
 * The two distinct values of a column (sorted) when it has exactly two, else null (also
 * for one value). 0/1 flags alternate unpredictably from row to row, so the rows are
 * compared without a branch per row, in chunks so that a column with many values is
 * given up after its first chunk.
 */
function twoDistinctValues(values: Float64Array): Float64Array | null {
  const n = values.length;
  const first = values[0];
  let i = 1;
  while (i < n && values[i] === first) i++;
  if (i === n) return null;
  const second = values[i];
  while (i < n) {
    const end = Math.min(n, i + TWO_VALUE_CHUNK);
    let other = 0;
    for (; i < end; i++) {
      const value = values[i];
      other |= +(value !== first) & +(value !== second);
    }
    if (other !== 0) return null;
  }
  return first < second ? Float64Array.of(first, second) : Float64Array.of(second, first);
}

/**
 * Adds radix × (index of the row's value among `distinct`) to every row's cell, straight
 * from the column: no array of codes is kept.
 */
function addValueCodes(cellOfRow: Int32Array, values: Float64Array, distinct: Float64Array, radix: number): void {
  if (distinct.length === 2) {
    const high = distinct[1];
    for (let i = 0; i < values.length; i++) cellOfRow[i] += radix * +(values[i] === high); // no branch: flags look random
    return;
  }
  const list = Array.from(distinct);
  for (let i = 0; i < values.length; i++) cellOfRow[i] += radix * list.indexOf(values[i]);
}

/** Writes `columns[k][i]` to `rowMajor[i · width + positions[k]]` for every row i, row by row. */
function copyColumnsIntoRows(rowMajor: Float64Array, width: number, columns: readonly Float64Array[], positions: readonly number[], rows: number): void {
  const count = columns.length;
  if (count === 0) return;
  if (count === 2) {
    const [first, second] = columns;
    const [a, b] = positions;
    for (let i = 0, base = 0; i < rows; i++, base += width) {
      rowMajor[base + a] = first[i];
      rowMajor[base + b] = second[i];
    }
    return;
  }
  const at = Int32Array.from(positions);
  for (let i = 0, base = 0; i < rows; i++, base += width) {
    for (let k = 0; k < count; k++) rowMajor[base + at[k]] = columns[k][i];
  }
}

function allocateFloat(length: number, shared: boolean): Float64Array {
  return shared ? new Float64Array(new SharedArrayBuffer(length * 8)) : new Float64Array(length);
}

function allocateInt(length: number, shared: boolean): Int32Array {
  return shared ? new Int32Array(new SharedArrayBuffer(length * 4)) : new Int32Array(length);
}

function variableTerms(variable: FrameVariable, role: TermRole): DesignTerm[] {
  if (variable.kind === 'continuous') return [{ name: variable.column, role, column: variable.column, level: null }];
  return variable.levels.slice(1).map((level) => ({ name: `${variable.column}=${level}`, role, column: variable.column, level }));
}

/**
 * Builds the design of g(μ) = b0 + b1·A + Σ b2ₖ·Bₖ + Σ b3ₖ·A·Bₖ + covariates, with
 * reference (treatment) coding: a categorical variable with L levels gives L − 1
 * indicators, the reference level having none; a continuous modifier enters as
 * (value − centre). Term order: intercept, exposure, modifier terms, products, covariates.
 * The frame is not modified.
 *
 * @example for a 0/1 exposure "call" and a modifier "age" with levels 18-44 (reference),
 *   45-64, 65+: terms are (Intercept), call=1, age=45-64, age=65+, call=1 × age=45-64,
 *   call=1 × age=65+.
 */
export function buildDesignMatrix(frame: AnalysisFrame, options: DesignOptions): DesignMatrix {
  const shared = options.shared ?? false;
  // A continuous intervention (dose) is a free term named by its column; its products too.
  const dose = frame.exposureValues;
  const exposureName = dose !== null ? frame.exposureColumn : `${frame.exposureColumn}=${frame.exposureLevels[1]}`;
  const trendScores = frame.modifier.kind === 'categorical' ? (options.trendScores ?? null) : null;
  const terms: DesignTerm[] = [
    { name: '(Intercept)', role: 'intercept', column: null, level: null },
    { name: exposureName, role: 'exposure', column: frame.exposureColumn, level: frame.exposureLevels[1] },
  ];
  const modifierTerms = variableTerms(frame.modifier, 'modifier');
  const modifierIndices = modifierTerms.map((_, k) => 2 + k);
  terms.push(...modifierTerms);
  const productIndices: number[] = [];
  if (options.includeProducts && trendScores !== null) {
    productIndices.push(terms.length);
    terms.push({ name: `${exposureName} × score(${frame.modifier.column})`, role: 'product', column: frame.modifier.column, level: null });
  } else if (options.includeProducts) {
    for (const term of modifierTerms) {
      productIndices.push(terms.length);
      terms.push({ name: `${exposureName} × ${term.name}`, role: 'product', column: term.column, level: term.level });
    }
  }
  const covariateIndices: number[] = [];
  const covariateStarts: number[] = [];
  for (const covariate of frame.covariates) {
    covariateStarts.push(terms.length);
    for (const term of variableTerms(covariate, 'covariate')) {
      covariateIndices.push(terms.length);
      terms.push(term);
    }
  }
  const p = terms.length;
  const rows = frame.n;
  const { modifier } = frame;
  const centre = modifier.kind === 'continuous' ? options.centre : 0;

  // Which variables define the cells: the exposure, a categorical modifier, then
  // categorical covariates and continuous covariates with few distinct values (0/1 flags,
  // small counts), while the cell count stays small. A continuous covariate in a cell
  // keeps its exact value: its term's value in the cell is the covariate's value.
  interface CellFactor {
    /** Codes of a categorical variable, or null for a continuous covariate. */
    readonly codes: Int32Array | null;
    readonly levels: number;
    readonly covariate: number;
    /** For a continuous covariate: the value of each code (its sorted distinct values). */
    readonly values: Float64Array | null;
    /** For a continuous covariate: its column, coded on the fly. */
    readonly column: Float64Array | null;
  }
  const cellFactors: CellFactor[] = [];
  const exposureRadix = dose !== null ? 1 : 2;
  let cellCount = exposureRadix;
  if (modifier.kind === 'categorical') {
    cellFactors.push({ codes: modifier.codes, levels: modifier.levels.length, covariate: -1, values: null, column: null });
    cellCount *= modifier.levels.length;
  }
  const covariateInCell = frame.covariates.map(() => false);
  frame.covariates.forEach((covariate, index) => {
    if (covariate.kind === 'categorical' && cellCount * covariate.levels.length <= MAX_CELLS) {
      cellFactors.push({ codes: covariate.codes, levels: covariate.levels.length, covariate: index, values: null, column: null });
      cellCount *= covariate.levels.length;
      covariateInCell[index] = true;
    }
  });
  frame.covariates.forEach((covariate, index) => {
    if (covariate.kind !== 'continuous') return;
    const distinct = fewDistinctValues(covariate.values, Math.min(MAX_DISTINCT_IN_CELL, Math.floor(MAX_CELLS / cellCount)));
    if (distinct === null) return;
    cellFactors.push({ codes: null, levels: distinct.length, covariate: index, values: distinct, column: covariate.values });
    cellCount *= distinct.length;
    covariateInCell[index] = true;
  });
  const isCellTerm = new Uint8Array(p);
  isCellTerm[0] = 1;
  isCellTerm[1] = dose !== null ? 0 : 1;
  if (modifier.kind === 'categorical') {
    for (const index of modifierIndices) isCellTerm[index] = 1;
    if (dose === null) for (const index of productIndices) isCellTerm[index] = 1;
  }
  frame.covariates.forEach((covariate, index) => {
    if (!covariateInCell[index]) return;
    const count = covariate.kind === 'categorical' ? covariate.levels.length - 1 : 1;
    for (let k = 0; k < count; k++) isCellTerm[covariateStarts[index] + k] = 1;
  });
  const cellTermList: number[] = [];
  const freeTermList: number[] = [];
  for (let j = 0; j < p; j++) (isCellTerm[j] ? cellTermList : freeTermList).push(j);
  const cellTerms = Int32Array.from(cellTermList);
  const freeTerms = Int32Array.from(freeTermList);
  const q = cellTerms.length;
  const r = freeTerms.length;
  const cellPosition = new Int32Array(p).fill(-1);
  cellTerms.forEach((term, t) => (cellPosition[term] = t));
  const freePosition = new Int32Array(p).fill(-1);
  freeTerms.forEach((term, k) => (freePosition[term] = k));

  // Cell index: mixed radix over (exposure, cell factors...), exposure fastest.
  const cellOfRow = allocateInt(rows, shared);
  if (dose === null) for (let i = 0; i < rows; i++) cellOfRow[i] = frame.exposure[i];
  let radix = exposureRadix;
  for (const { codes, levels, values, column } of cellFactors) {
    if (codes !== null) {
      for (let i = 0; i < rows; i++) cellOfRow[i] += radix * codes[i];
    } else {
      addValueCodes(cellOfRow, column as Float64Array, values as Float64Array, radix);
    }
    radix *= levels;
  }

  // Values of the cell terms in every cell.
  const cellValues = new Float64Array(cellCount * q);
  for (let cell = 0; cell < cellCount; cell++) {
    const base = cell * q;
    const exposure = cell % exposureRadix;
    let rest = Math.floor(cell / exposureRadix);
    cellValues[base + cellPosition[0]] = 1;
    if (dose === null) cellValues[base + cellPosition[1]] = exposure;
    for (const { levels, covariate, values } of cellFactors) {
      const code = rest % levels;
      rest = Math.floor(rest / levels);
      if (values !== null) {
        cellValues[base + cellPosition[covariateStarts[covariate]]] = values[code];
        continue;
      }
      if (code === 0) continue;
      if (covariate < 0) {
        cellValues[base + cellPosition[modifierIndices[code - 1]]] = 1;
        if (dose === null && productIndices.length > 0 && exposure === 1) {
          if (trendScores !== null) cellValues[base + cellPosition[productIndices[0]]] = trendScores[code];
          else cellValues[base + cellPosition[productIndices[code - 1]]] = 1;
        }
      } else {
        cellValues[base + cellPosition[covariateStarts[covariate] + code - 1]] = 1;
      }
    }
  }

  // Free terms, row-major. Continuous covariates are copied in one pass over the rows,
  // filling each row's slots together (one sweep of the buffer instead of one per column).
  const free = allocateFloat(rows * r, shared);
  if (dose !== null) fillDoseTerms(free, r, dose, frame, freePosition, productIndices, trendScores);
  if (modifier.kind === 'continuous') {
    const mainPosition = freePosition[modifierIndices[0]];
    const productPosition = productIndices.length > 0 ? freePosition[productIndices[0]] : -1;
    const values = modifier.values;
    for (let i = 0; i < rows; i++) {
      const value = values[i] - centre;
      free[i * r + mainPosition] = value;
      if (productPosition >= 0) free[i * r + productPosition] = (dose !== null ? dose[i] : frame.exposure[i]) * value;
    }
  }
  const copied: Float64Array[] = [];
  const copiedPositions: number[] = [];
  frame.covariates.forEach((covariate, index) => {
    if (covariateInCell[index]) return;
    const start = covariateStarts[index];
    if (covariate.kind === 'continuous') {
      copied.push(covariate.values);
      copiedPositions.push(freePosition[start]);
    } else {
      const codes = covariate.codes;
      for (let i = 0; i < rows; i++) {
        const code = codes[i];
        if (code > 0) free[i * r + freePosition[start + code - 1]] = 1;
      }
    }
  });
  copyColumnsIntoRows(free, r, copied, copiedPositions, rows);

  return {
    rows,
    columns: p,
    terms,
    cellCount,
    cellOfRow,
    cellTerms,
    cellValues,
    freeTerms,
    free,
    exposureIndex: 1,
    modifierIndices,
    productIndices,
    covariateIndices,
    centre,
    offset: frame.extras?.offset ?? null,
  };
}

/**
 * A continuous intervention's free terms: the dose, and with a categorical modifier its
 * products dose × indicator of each non-reference level (or dose × the level's score for
 * the trend design). Products with a continuous modifier are written by the caller.
 */
function fillDoseTerms(
  free: Float64Array, r: number, dose: Float64Array, frame: AnalysisFrame, freePosition: Int32Array,
  productIndices: readonly number[], trendScores: Float64Array | null,
): void {
  const exposurePosition = freePosition[1];
  for (let i = 0; i < dose.length; i++) free[i * r + exposurePosition] = dose[i];
  if (frame.modifier.kind !== 'categorical' || productIndices.length === 0) return;
  const codes = frame.modifier.codes;
  if (trendScores !== null) {
    const position = freePosition[productIndices[0]];
    for (let i = 0; i < dose.length; i++) free[i * r + position] = dose[i] * trendScores[codes[i]];
    return;
  }
  const positions = productIndices.map((index) => freePosition[index]);
  for (let i = 0; i < dose.length; i++) {
    const code = codes[i];
    if (code > 0) free[i * r + positions[code - 1]] = dose[i];
  }
}

/** Writes row i of X (all p terms, in term order) into `out`. For the slower passes. */
export function designRow(design: DesignMatrix, row: number, out: Float64Array): Float64Array {
  const q = design.cellTerms.length;
  const r = design.freeTerms.length;
  const cellBase = design.cellOfRow[row] * q;
  for (let t = 0; t < q; t++) out[design.cellTerms[t]] = design.cellValues[cellBase + t];
  const freeBase = row * r;
  for (let k = 0; k < r; k++) out[design.freeTerms[k]] = design.free[freeBase + k];
  return out;
}

/** Dense row-major copy of X (n × p); for tests and small data only. */
export function denseDesign(design: DesignMatrix): Float64Array {
  const p = design.columns;
  const dense = new Float64Array(design.rows * p);
  const row = new Float64Array(p);
  for (let i = 0; i < design.rows; i++) dense.set(designRow(design, i, row), i * p);
  return dense;
}
