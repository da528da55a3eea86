/**
 * The engine's data, specification and result types. The zod schemas in
 * `boundary/schemas.ts` describe the same shapes for the API and the audit trail (the
 * engine core cannot import zod); a test checks that real results parse under them.
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
}

// ---------------------------------------------------------------------------------------
// Specification
// ---------------------------------------------------------------------------------------

export type OutcomeType = 'binary' | 'continuous';
export type ModelFamily = 'logistic' | 'modified-poisson' | 'log-binomial' | 'linear';
export type CiMethod = 'delta' | 'mover' | 'bootstrap';
export type EffectMeasure = 'OR' | 'RR' | 'RD' | 'MD';
export type MultiplicityCorrection = 'none' | 'holm' | 'bh';

/** Where the conditional effect of a continuous modifier is reported (simple slopes). */
export type SlopePoints =
  | { readonly kind: 'sd' }
  | { readonly kind: 'percentiles'; readonly percentiles: readonly number[] }
  | { readonly kind: 'values'; readonly values: readonly number[] };

export interface AnalysisSpec {
  readonly outcome: {
    readonly column: string;
    readonly type: OutcomeType;
    /** Extra: the level counted as the event when a binary outcome is categorical. */
    readonly event?: string;
  };
  readonly exposure: { readonly column: string; readonly reference: string };
  readonly modifier: {
    readonly column: string;
    readonly type: 'categorical' | 'continuous';
    readonly reference?: string;
    /** Extra (continuous only): subtract this before forming the product; default 'none'. */
    readonly centre?: 'none' | 'mean' | 'median' | number;
    /** Extra (continuous only): simple-slope points; default mean and ± 1 SD. */
    readonly slopesAt?: SlopePoints;
  };
  readonly covariates: ReadonlyArray<{
    readonly column: string;
    readonly type: 'categorical' | 'continuous';
    readonly reference?: string;
  }>;
  readonly model: ModelFamily;
  readonly ci: {
    readonly level: number;
    readonly method: CiMethod;
    /** Bootstrap replicates; default 2000. */
    readonly replicates?: number;
    /** Seed of the bootstrap's random stream, an integer in [0, 2³²); default 1. */
    readonly seed?: number;
  };
  /** Extra: must agree with the model if given (OR logistic, RR log-binomial/modified Poisson, RD or MD linear). */
  readonly effectMeasure?: EffectMeasure;
  /** Extra: significance level of tests, the Johnson-Neyman boundary and planning; default 1 − ci.level. */
  readonly alpha?: number;
  /** Extra: which adjusted p-value the summary treats as primary; both are always reported. */
  readonly multiplicity?: MultiplicityCorrection;
  /** Extra: recode each level's 2 × 2 so that the lowest-risk cell is the reference (Knol et al. 2011). */
  readonly preventive?: boolean;
  /** Extra (linear only): 'model' (classical) or 'hc3' standard errors for the measures; default 'model'. */
  readonly standardErrors?: 'model' | 'hc3';
  /** Extra: interaction size for the power calculation, on the effect scale (ratio of ratios, or difference). */
  readonly planning?: { readonly interaction?: number; readonly power?: number };
}

// ---------------------------------------------------------------------------------------
// Result
// ---------------------------------------------------------------------------------------

export interface Interval {
  estimate: number | null;
  lower: number | null;
  upper: number | null;
}

/** An interval with the standard error of its estimate (on the link scale for ratios) and p. */
export interface EffectInterval extends Interval {
  se: number | null;
  p: number | null;
}

export interface MeasureInterval extends Interval {
  /** Delta-method standard error (of ln S for S). */
  se: number | null;
  /** How the limits were computed. */
  method: CiMethod;
}

export interface Coefficient {
  term: string;
  estimate: number | null;
  se: number | null;
  statistic: number | null;
  p: number | null;
  lower: number | null;
  upper: number | null;
  /** Linear models: HC3 standard error beside the classical one. */
  seRobust?: number | null;
}

export interface ModelSummary {
  family: ModelFamily;
  /** The family asked for (differs from `family` after the log-binomial fallback). */
  requestedFamily: ModelFamily;
  link: 'logit' | 'log' | 'identity';
  iterations: number;
  converged: boolean;
  logLik: number | null;
  deviance: number | null;
  aic: number | null;
  residualDf: number;
  /** Residual variance σ² (linear) or 1 (GLMs). */
  dispersion: number | null;
  standardErrors: 'model' | 'HC0' | 'HC3';
  coefficients: Coefficient[];
  /** Covariance of the coefficients (the one used for the measures), by term order. */
  covariance: (number | null)[][];
}

export interface StratumEffect {
  level: string;
  n: number;
  /** Binary outcomes: events in the stratum. */
  events: number | null;
  effect: EffectInterval;
  pAdjusted: { holm: number | null; bh: number | null };
}

export interface ModifierEffect {
  exposure: string;
  level: string;
  effect: EffectInterval;
}

export interface JointCell {
  exposure: string;
  modifier: string;
  n: number;
  events: number | null;
  /** Binary: proportion with the event; continuous: mean outcome. */
  risk: number | null;
  mean: number | null;
  /** Effect against the reference cell; null for the reference cell itself. */
  effect: EffectInterval | null;
}

export interface MultiplicativeEntry {
  level: string;
  estimate: number | null;
  lower: number | null;
  upper: number | null;
  p: number | null;
  se: number | null;
}

export interface AdditiveEntry {
  level: string;
  /** The joint cell used as the reference (differs from the coded reference after preventive recoding). */
  reference: { exposure: string; modifier: string };
  reri: MeasureInterval | null;
  ap: MeasureInterval | null;
  apStar: MeasureInterval | null;
  s: MeasureInterval | null;
  /** Linear models: the product coefficient, the difference of differences. */
  differenceInDifferences: EffectInterval | null;
}

export interface OmnibusTest {
  test: 'likelihood-ratio' | 'F' | 'wald' | 'wald-robust';
  statistic: number | null;
  df: number;
  df2: number | null;
  p: number | null;
}

export interface SlopeEntry {
  label: string;
  at: number;
  estimate: number | null;
  se: number | null;
  lower: number | null;
  upper: number | null;
  p: number | null;
}

export interface JohnsonNeymanResult {
  bounds: [number, number] | [number] | null;
  significant: 'outside' | 'inside' | 'everywhere' | 'nowhere';
  observed: [number, number];
  boundsInRange: boolean[];
  criticalValue: number;
}

export interface BandPoint {
  x: number;
  estimate: number | null;
  lower: number | null;
  upper: number | null;
}

export interface TestResult {
  statistic: number | null;
  df: number;
  p: number | null;
}

export interface StratifiedTableRow {
  level: string;
  /** a exposed events, b exposed non-events, c unexposed events, d unexposed non-events. */
  a: number;
  b: number;
  c: number;
  d: number;
  oddsRatio: Interval | null;
  riskRatio: Interval | null;
  riskDifference: Interval | null;
}

export interface StratifiedTables {
  strata: StratifiedTableRow[];
  mantelHaenszel: {
    oddsRatio: Interval | null;
    riskRatio: Interval | null;
    /** Pooled risk difference with limits from Sato's (1989) variance. */
    riskDifference: Interval | null;
    /** The pooled risk difference's limits under both published variances, each labelled: Sato (1989), Greenland-Robins (1985). */
    riskDifferenceVariances: { variance: 'sato' | 'greenland-robins'; label: string; se: number; lower: number; upper: number }[] | null;
    chiSquare: TestResult & { continuityCorrection: boolean };
  };
  homogeneity: { breslowDay: TestResult | null; breslowDayTarone: TestResult | null; woolf: TestResult | null };
}

export interface PlanningLevel {
  level: string;
  /** Standard error of the product term (link scale) at the observed n. */
  se: number | null;
  /** Interaction size used, on the effect scale. */
  interaction: number | null;
  power: number | null;
  /** Smallest interaction detectable with `targetPower`, on the effect scale (both directions for ratios). */
  detectable: { lower: number | null; upper: number | null };
  /** Rows needed for `targetPower` at `interaction`, scaling the standard error by √(n/n′). */
  requiredN: number | null;
}

export interface PlanningBlock {
  method: 'normal-approximation';
  alpha: number;
  targetPower: number;
  n: number;
  /** Where the interaction size came from. */
  interactionSource: 'spec' | 'main-effect';
  levels: PlanningLevel[];
}

export interface EngineWarning {
  code: string;
  message: string;
  column?: string;
  level?: string;
  term?: string;
}

export interface AnalysisResult {
  n: number;
  dropped: number;
  /** Rows missing in each used column that has any; a left-out row may count under several columns. */
  missingByColumn: { column: string; rows: number }[];
  engineVersion: string;
  seed: number | null;
  effectMeasure: EffectMeasure;
  ciLevel: number;
  ciMethod: CiMethod;
  alpha: number;
  multiplicity: MultiplicityCorrection;
  outcome: { column: string; type: OutcomeType; event: string | null; events: number | null; mean: number | null };
  exposure: { column: string; reference: string; level: string };
  modifier: {
    column: string;
    type: 'categorical' | 'continuous';
    reference: string | null;
    levels: string[] | null;
    centre: number | null;
    mean: number | null;
    sd: number | null;
    observed: [number, number] | null;
  };
  covariates: { column: string; type: 'categorical' | 'continuous'; reference: string | null; terms: string[] }[];
  model: ModelSummary;
  strata: StratumEffect[];
  modifierEffects: ModifierEffect[];
  joint: { reference: { exposure: string; modifier: string }; cells: JointCell[] } | null;
  interaction: {
    multiplicative: MultiplicativeEntry[];
    additive: AdditiveEntry[];
    omnibus: OmnibusTest;
  };
  slopes?: SlopeEntry[];
  johnsonNeyman?: JohnsonNeymanResult;
  band?: BandPoint[];
  stratifiedTables: StratifiedTables | null;
  /**
   * Percentile bootstrap accounting: replicates left out of the intervals (`failed`), by
   * reason, the rule applied, and whether the intervals are flagged (more than 1 % left out).
   */
  bootstrap: {
    replicates: number;
    successful: number;
    failed: number;
    failures: { notConverged: number; separated: number; fitFailed: number; undefinedMeasure: number };
    flagged: boolean;
    rule: string;
    seed: number;
  } | null;
  planning: PlanningBlock;
  warnings: EngineWarning[];
}

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
}
