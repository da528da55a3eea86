import type { DesignMatrix } from '../design/designMatrix.js';
import type { AdditiveEntry, AnalysisResult, EngineWarning, MeasureInterval } from '../types.js';
import {
  REPLICATE_FIT_FAILED,
  REPLICATE_NOT_CONVERGED,
  REPLICATE_OK,
  REPLICATE_SEPARATED,
  REPLICATE_UNDEFINED_MEASURE,
  type BootstrapJob,
} from './bootstrapReplicate.js';
import { bootstrapCoefficients, type BootstrapRunOptions } from './percentileBootstrap.js';
import { percentileInterval } from './percentileInterval.js';

/** Above this share of replicates left out, the bootstrap intervals are flagged. */
export const BOOTSTRAP_FLAG_SHARE = 0.01;

export const BOOTSTRAP_RULE =
  'Replicates that do not converge, separate (a joint stratum of the resample with no events or only events, or fitted probabilities of 0 or 1), cannot be fitted, or give an undefined RERI, AP or difference of differences are left out of every percentile interval; the intervals are flagged when more than 1% of replicates are left out.';

/** Point estimates of RERI, AP, AP* and S from one replicate's coefficients (NaN where undefined). */
export function additivePoints(coefficients: ArrayLike<number>, contrasts: Float64Array): [number, number, number, number] {
  const p = coefficients.length;
  const l = [0, 0, 0];
  for (let row = 0; row < 3; row++) for (let j = 0; j < p; j++) l[row] += contrasts[row * p + j] * coefficients[j];
  const [e10, e01, e11] = l.map(Math.exp);
  const reri = e11 - e10 - e01 + 1;
  const denominator = e10 + e01 - 2;
  const s = denominator > 0 && e11 > 1 ? (e11 - 1) / denominator : Number.NaN;
  return [reri, reri / e11, e11 !== 1 ? reri / (e11 - 1) : Number.NaN, s];
}

export interface BootstrapInput {
  readonly job: Omit<BootstrapJob, 'replicates' | 'seed'>;
  readonly design: DesignMatrix;
  readonly replicates: number;
  readonly seed: number;
  readonly level: number;
  readonly ratio: boolean;
  /** Per additive entry, the contrast rows it was computed from (ratio: 3 × p; linear: p). */
  readonly contrasts: readonly Float64Array[];
}

/**
 * Percentile bootstrap intervals of the additive measures (Efron and Tibshirani 1993,
 * §13.3; Assmann et al., Epidemiology 1996;7:90-92), with the accounting of replicates left
 * out (BOOTSTRAP_RULE): each replicate's status comes from bootstrapReplicate.ts; a
 * replicate whose RERI or AP (ratio models) or difference of differences (linear) is not
 * finite at any level counts as "undefined measure". Those replicates are left out of every
 * interval, counted by reason, and the intervals flagged when more than 1 % are left out.
 * Replaces the intervals of `additive` in place and returns the result's bootstrap block.
 */
export async function bootstrapIntervals(
  input: BootstrapInput,
  additive: AdditiveEntry[],
  warnings: EngineWarning[],
  options: BootstrapRunOptions,
): Promise<NonNullable<AnalysisResult['bootstrap']>> {
  const { replicates, ratio, design } = input;
  const p = design.columns;
  const run = await bootstrapCoefficients({ ...input.job, replicates, seed: input.seed }, options);
  const status = run.status;
  // Per entry: RERI, AP, AP*, S (ratio) or the difference of differences (linear).
  const series = additive.map(() => [0, 1, 2, 3].map(() => new Float64Array(replicates).fill(Number.NaN)));
  for (let r = 0; r < replicates; r++) {
    if (status[r] !== REPLICATE_OK) continue;
    const replicate = run.coefficients.subarray(r * p, (r + 1) * p);
    const values = input.contrasts.map((contrasts) => {
      if (ratio) return additivePoints(replicate, contrasts);
      let value = 0;
      for (let j = 0; j < p; j++) value += contrasts[j] * replicate[j];
      return [value, Number.NaN, Number.NaN, Number.NaN];
    });
    if (values.some((v) => !Number.isFinite(v[0]) || (ratio && !Number.isFinite(v[1])))) {
      status[r] = REPLICATE_UNDEFINED_MEASURE;
      continue;
    }
    values.forEach((v, index) => v.forEach((value, m) => (series[index][m][r] = value)));
  }
  const count = (code: number) => status.reduce((total, value) => total + (value === code ? 1 : 0), 0);
  const failures = {
    notConverged: count(REPLICATE_NOT_CONVERGED),
    separated: count(REPLICATE_SEPARATED),
    fitFailed: count(REPLICATE_FIT_FAILED),
    undefinedMeasure: count(REPLICATE_UNDEFINED_MEASURE),
  };
  const failed = failures.notConverged + failures.separated + failures.fitFailed + failures.undefinedMeasure;
  const flagged = failed > BOOTSTRAP_FLAG_SHARE * replicates;
  if (failed > 0) {
    const reasons = [
      [failures.separated, 'separated'],
      [failures.notConverged, 'did not converge'],
      [failures.fitFailed, 'could not be fitted'],
      [failures.undefinedMeasure, 'gave an undefined measure'],
    ]
      .filter(([n]) => (n as number) > 0)
      .map(([n, reason]) => `${n} ${reason}`)
      .join(', ');
    warnings.push({
      code: 'BOOTSTRAP_FAILED_REPLICATES',
      message: `${failed} of ${replicates} bootstrap replicates (${((100 * failed) / replicates).toFixed(2)}%) were left out of the percentile intervals: ${reasons}.${flagged ? ' More than 1% were left out, so the bootstrap intervals are flagged: they describe only the resamples in which the measures exist and may be too narrow.' : ''}`,
    });
  }
  const apply = (measure: MeasureInterval | null, values: Float64Array): MeasureInterval | null => {
    if (measure === null) return null;
    const interval = percentileInterval(values, input.level);
    return interval === null ? { ...measure, lower: null, upper: null, method: 'bootstrap' } : { ...measure, ...interval, method: 'bootstrap' };
  };
  additive.forEach((entry, index) => {
    const [first, second, third, fourth] = series[index];
    if (ratio) {
      entry.reri = apply(entry.reri, first);
      entry.ap = apply(entry.ap, second);
      entry.apStar = apply(entry.apStar, third);
      entry.s = apply(entry.s, fourth);
    } else if (entry.differenceInDifferences !== null) {
      const interval = percentileInterval(first, input.level);
      if (interval !== null) entry.differenceInDifferences = { ...entry.differenceInDifferences, ...interval };
    }
  });
  return { replicates, successful: replicates - failed, failed, failures, flagged, rule: BOOTSTRAP_RULE, seed: input.seed };
}
