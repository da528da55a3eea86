/**
 * Frequency weights: a grouped extract (one row per covariate pattern with its count) is
 * analysed as the rows it stands for. Row i with weight wᵢ is repeated wᵢ times before the
 * frame is built, so every later sum (the fit, its HC/sandwich/cluster pieces, the
 * stratified tables, counts and the bootstrap, which then resamples units) counts it wᵢ
 * times and the result is exactly that of the expanded rows, by construction.
 * Weights must be positive whole numbers; a row without a weight is left out and counted.
 */
import { ColumnNotFoundError, InvalidDataError } from '../errors.js';
import type { AnalysisSpec, EngineColumn, EngineData, EngineWarning, WeightsBlock } from '../types.js';
import { rowPlace } from './frameChecks.js';

/** The most units a weighted extract may stand for (the expanded rows are held in memory). */
export const MAX_WEIGHTED_UNITS = 5_000_000;

export interface WeightedData {
  readonly data: EngineData;
  readonly block: WeightsBlock;
  readonly warnings: EngineWarning[];
}

function expandColumn(column: EngineColumn, origin: Int32Array): EngineColumn {
  const units = origin.length;
  const missing = column.missing === undefined ? undefined : Uint8Array.from(origin, (row) => (column.missing as Uint8Array)[row]);
  if (column.kind === 'numeric') {
    const values = new Float64Array(units);
    for (let u = 0; u < units; u++) values[u] = column.values[origin[u]];
    return { kind: 'numeric', values, ...(missing ? { missing } : {}) };
  }
  const codes = new Int32Array(units);
  for (let u = 0; u < units; u++) codes[u] = column.codes[origin[u]];
  return { kind: 'categorical', codes, levels: column.levels, ...(missing ? { missing } : {}) };
}

/**
 * Expands the columns a specification uses by the frequency weights of `spec.weights`.
 *
 * @throws InvalidDataError naming the line of a weight that is not a positive whole number,
 *   for a text weights column, or when the weights add up to more than MAX_WEIGHTED_UNITS.
 */
export function expandFrequencyWeights(data: EngineData, spec: AnalysisSpec, weightsColumn: string): WeightedData {
  const column = Object.prototype.hasOwnProperty.call(data.columns, weightsColumn) ? data.columns[weightsColumn] : undefined;
  if (column === undefined) throw new ColumnNotFoundError(weightsColumn);
  if (column.kind !== 'numeric') {
    throw new InvalidDataError(`The weights column "${weightsColumn}" holds text; frequency weights must be positive whole numbers.`, { column: weightsColumn });
  }
  let units = 0;
  let rows = 0;
  for (let row = 0; row < data.rowCount; row++) {
    const value = column.values[row];
    if (column.missing?.[row] === 1 || Number.isNaN(value)) continue;
    if (!(Number.isInteger(value) && value > 0)) {
      throw new InvalidDataError(
        `The weight "${weightsColumn}" is ${String(value)} on ${rowPlace(data, row)}; frequency weights must be positive whole numbers (the number of identical rows each row stands for).`,
        { column: weightsColumn },
      );
    }
    units += value;
    rows++;
    if (units > MAX_WEIGHTED_UNITS) {
      throw new InvalidDataError(`The weights in "${weightsColumn}" add up to more than ${MAX_WEIGHTED_UNITS.toLocaleString('en-GB')} units, more than an analysis holds.`, { column: weightsColumn });
    }
  }
  const origin = new Int32Array(units);
  let at = 0;
  for (let row = 0; row < data.rowCount; row++) {
    const value = column.values[row];
    if (column.missing?.[row] === 1 || Number.isNaN(value)) continue;
    for (let k = 0; k < value; k++) origin[at++] = row;
  }
  const used = [spec.outcome.column, spec.exposure.column, spec.modifier.column, ...spec.covariates.map((c) => c.column), spec.cluster?.column, spec.outcome.personTime];
  const columns: Record<string, EngineColumn> = {};
  for (const name of used) {
    if (name === undefined || Object.prototype.hasOwnProperty.call(columns, name)) continue;
    const source = Object.prototype.hasOwnProperty.call(data.columns, name) ? data.columns[name] : undefined;
    if (source !== undefined) columns[name] = expandColumn(source, origin);
  }
  const lineOfRow = data.lineOfRow;
  const sourceRowOf = data.sourceRowOf;
  const warnings: EngineWarning[] = [
    {
      code: 'FREQUENCY_WEIGHTS',
      message:
        `Frequency weights from "${weightsColumn}": ${rows} rows stand for ${units} units, and every count, sum and interval below is that of the ${units} units` +
        (rows < data.rowCount ? `; ${data.rowCount - rows} rows without a weight were left out.` : '.'),
      column: weightsColumn,
    },
  ];
  return {
    data: {
      rowCount: units,
      columns,
      ...(lineOfRow ? { lineOfRow: (row: number) => lineOfRow(origin[row]) } : {}),
      sourceRowOf: (row: number) => (sourceRowOf ? sourceRowOf(origin[row]) : origin[row]),
    },
    block: { column: weightsColumn, rows, units },
    warnings,
  };
}
