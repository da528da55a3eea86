/**
 * The engine's types: data in and options are declared here; the specification and the
 * result are the types inferred from the zod schemas in `boundary/schemas.ts` (one
 * definition for the engine, the API and the stored runs), re-exported below.
 */

// ---------------------------------------------------------------------------------------
// Data in
// ---------------------------------------------------------------------------------------

/** A numeric column. A row is missing when `missing[i] === 1` or the value is NaN. */
export interface NumericColumn {
  readonly kind: 'numeric';
  readonly values: Float64Array;
  readonly missing?: Uint8Array;
}

/**
 * A categorical column: integer codes into `levels`. A row is missing when
 * `missing[i] === 1` or its code is negative.
 */
export interface CategoricalColumn {
  readonly kind: 'categorical';
  readonly codes: Int32Array;
  readonly levels: readonly string[];
  readonly missing?: Uint8Array;
}

export type EngineColumn = NumericColumn | CategoricalColumn;

/**
 * Columns of equal length, addressed by name. Categorical levels that are missing-value
 * tokens (see design/missingValues.ts) are read as missing, never as levels.
 */
export interface EngineData {
  readonly rowCount: number;
  readonly columns: Readonly<Record<string, EngineColumn>>;
  /** Extra: the line of the source file that holds data row `row` (0-based), for messages. */
  readonly lineOfRow?: (row: number) => number;
  /** Extra: the row of the data as given that row `row` was copied from (frequency-weighted rows expanded), for messages. */
  readonly sourceRowOf?: (row: number) => number;
}

// ---------------------------------------------------------------------------------------
// Specification and result: defined once, as the zod schemas of boundary/schemas.ts.
// Imported here for their types only, so the engine core never loads zod.
// ---------------------------------------------------------------------------------------

export type {
  Spec as AnalysisSpec,
  AnySpec,
  ScreenSpec,
  OutcomeType,
  ModelFamily,
  CiMethod,
  EffectMeasure,
  MultiplicityCorrection,
  SlopePoints,
  Result as AnalysisResult,
  Interval,
  EffectInterval,
  MeasureInterval,
  TestResult,
  Coefficient,
  ModelSummary,
  StratumEffect,
  ModifierEffect,
  JointCell,
  MultiplicativeEntry,
  AdditiveEntry,
  OmnibusTest,
  SlopeEntry,
  JohnsonNeymanResult,
  BandPoint,
  ModifierSpread,
  StratifiedTableRow,
  StratifiedTables,
  BootstrapAccount,
  PlanningLevel,
  PlanningBlock,
  EngineWarning,
  StandardizedRisk,
  NumberNeeded,
  StandardizedLevel,
  StandardizedEffects,
  EValueEntry,
  EValues,
  ClusteringBlock,
  RatesBlock,
  WeightsBlock,
  ExposureType,
  DoseBlock,
  TrendBlock,
  PredictionsBlock,
  ScreenEntry,
  ScreenBlock,
} from './boundary/schemas.js';

// ---------------------------------------------------------------------------------------
// Options
// ---------------------------------------------------------------------------------------

export interface ProgressEvent {
  stage: 'prepare' | 'fit' | 'measures' | 'bootstrap' | 'tables' | 'done';
  fraction: number;
}

export interface AnalysisOptions {
  readonly onProgress?: (event: ProgressEvent) => void;
  readonly signal?: AbortSignal;
  /** Threads for the bootstrap and for large fits: 0 or 1 runs in-process; default min(2, cores). */
  readonly threads?: number;
  /** Rows from which a fit splits its passes across threads; default 200,000. */
  readonly parallelFitRows?: number;
  /** The data dictionary's unit of the person-time column (e.g. "bed-days"), shown with the rates. */
  readonly personTimeUnit?: string | null;
}
