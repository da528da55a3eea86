/**
 * The columns of an analysis frame beyond its model variables: the cluster of each row
 * (for the cluster-robust variance) and the person-time of each row (the offset of a
 * Poisson rate model), plus the check of a count outcome. Rows missing in either column
 * are left out with the other incomplete rows, and counted under the column.
 */
import { InvalidDataError } from '../errors.js';
import type { AnalysisSpec, EngineColumn, EngineData } from '../types.js';
import { refuseText, rowPlace } from './frameChecks.js';

/** Shortest round-trip text of a number (as analysisFrame's numberLevel; not imported, to keep the two files out of a cycle). */
function numberLevel(value: number): string {
  return Object.is(value, -0) ? '0' : String(value);
}

/** Clusters of the analysed rows: code 0 … count − 1 per row. */
export interface ClusterCodes {
  readonly column: string;
  readonly codes: Int32Array;
  readonly count: number;
}

export interface FrameExtras {
  readonly cluster: ClusterCodes | null;
  /** Person-time of each analysed row (all positive), or null. */
  readonly personTime: Float64Array | null;
  /** log(person-time), the offset of the linear predictor, or null. */
  readonly offset: Float64Array | null;
}

/** Columns read besides the model's own (cluster, person-time) that are not among `used`. */
export function extraColumnNames(spec: AnalysisSpec, used: readonly string[]): string[] {
  const names: string[] = [];
  for (const name of [spec.cluster?.column, spec.outcome.personTime]) {
    if (name !== undefined && !used.includes(name) && !names.includes(name)) names.push(name);
  }
  return names;
}

function clusterCodes(column: EngineColumn, name: string, rows: Int32Array): ClusterCodes {
  const codes = new Int32Array(rows.length);
  const lookup = new Map<string | number, number>();
  for (let i = 0; i < rows.length; i++) {
    const key = column.kind === 'categorical' ? column.codes[rows[i]] : numberLevel(column.values[rows[i]]);
    let code = lookup.get(key);
    if (code === undefined) {
      code = lookup.size;
      lookup.set(key, code);
    }
    codes[i] = code;
  }
  return { column: name, codes, count: lookup.size };
}

/**
 * Codes the cluster and person-time columns over the analysed rows.
 *
 * @throws ColumnTypeMismatchError for text in the person-time column; InvalidDataError for
 *   a single cluster, or for a person-time of zero, below zero or not finite (naming its
 *   line): such a row has no time at risk, and is refused rather than silently left out.
 */
export function codeFrameExtras(data: EngineData, spec: AnalysisSpec, column: (name: string) => EngineColumn, rows: Int32Array): FrameExtras {
  const clusterName = spec.cluster?.column;
  const cluster = clusterName === undefined ? null : clusterCodes(column(clusterName), clusterName, rows);
  if (cluster !== null && cluster.count < 2) {
    throw new InvalidDataError(
      `The cluster column "${cluster.column}" has a single cluster among the analysed rows; cluster-robust standard errors need at least two (and 30 or more to be reliable).`,
      { column: cluster.column },
    );
  }
  const timeName = spec.outcome.personTime;
  if (timeName === undefined) return { cluster, personTime: null, offset: null };
  const time = column(timeName);
  if (time.kind !== 'numeric') refuseText(data, time, timeName, 'for person-time');
  const personTime = new Float64Array(rows.length);
  const offset = new Float64Array(rows.length);
  for (let i = 0; i < rows.length; i++) {
    const value = time.values[rows[i]];
    if (!(value > 0) || !Number.isFinite(value)) {
      throw new InvalidDataError(
        `The person-time "${timeName}" is ${numberLevel(value)} on ${rowPlace(data, rows[i])}; person-time must be positive. ` +
          'Correct the value, or leave it empty to leave the row out.',
        { column: timeName },
      );
    }
    personTime[i] = value;
    offset[i] = Math.log(value);
  }
  return { cluster, personTime, offset };
}

/** @throws InvalidDataError naming the line of the first count that is not a whole number of at least 0. */
export function checkCountOutcome(data: EngineData, outcome: Float64Array, rows: Int32Array, name: string): void {
  for (let i = 0; i < outcome.length; i++) {
    const value = outcome[i];
    if (!(value >= 0) || !Number.isInteger(value)) {
      throw new InvalidDataError(`The count outcome "${name}" is ${numberLevel(value)} on ${rowPlace(data, rows[i])}; counts must be whole numbers of 0 or more.`, { column: name });
    }
  }
}
