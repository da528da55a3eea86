/**
 * The sentences of a result page: the engine's warnings with a title each, the rows left
 * out and why, the multiplicity note, the Johnson-Neyman boundaries and the smallest
 * detectable interaction in words, and the names of the omnibus tests.
 */
import type { Result } from '@/engine/boundary/schemas';
import { MULTIPLICITY_LABEL } from '../analyses/specRules';
import { percentText } from '../analyses/specWords';
import { fixed, formatCount, formatNumber, modifierDecimals, type MeasureInfo } from './resultFormat';

export interface WarningView {
  code: string;
  title: string;
  message: string;
}

/** The omnibus test of all product terms, by the engine's test. */
export const OMNIBUS_LABEL: Record<Result['interaction']['omnibus']['test'], string> = {
  'likelihood-ratio': 'Likelihood-ratio test of all product terms',
  F: 'F test of all product terms',
  wald: 'Wald test of all product terms',
  'wald-robust': 'Robust Wald test of all product terms',
};

const WARNING_TITLE: Record<string, string> = {
  SEPARATION: 'A stratum with no events or only events',
  FEW_CLUSTERS: 'Few clusters for cluster-robust standard errors',
  OVERDISPERSION: 'Counts vary more than the Poisson model allows',
  FREQUENCY_WEIGHTS: 'Rows weighted by their counts',
  SPARSE_STRATUM: 'Few events in a stratum',
  ZERO_CELL: 'An empty cell in a 2 × 2 table',
  WOOLF_CORRECTED: 'Continuity correction in the Woolf test',
  COMMON_OUTCOME_OR_RERI: 'Common outcome: odds ratios overstate risk ratios',
  PREVENTIVE_EXPOSURE: 'The intervention lowers risk',
  S_UNDEFINED: 'Synergy index not defined',
  MOVER_RERI_ONLY: 'Interval methods differ by measure',
  BOOTSTRAP_FAILED_REPLICATES: 'Some bootstrap refits failed',
  OMNIBUS_WALD: 'The omnibus test is a Wald test',
  EMPTY_COVARIATE_LEVEL: 'A covariate level without rows',
  LOG_BINOMIAL_FALLBACK: 'The log-binomial model was replaced',
  NOT_CONVERGED: 'The model did not converge',
  NEAR_SINGULAR_DESIGN: 'Nearly redundant terms',
  FITTED_RISK_ABOVE_ONE: 'Fitted risks above one',
  ROWS_DROPPED: 'Rows left out for missing values',
  POSSIBLE_MISSING_CODE: 'A level that may stand for a missing value',
};

/**
 * Which columns the left-out rows were missing in, as words: `age 7, arm 3`. A row can be
 * missing in more than one column. Results made before the per-column counts give ''.
 */
export function missingInWords(result: Pick<Result, 'missingByColumn'>): string {
  return (result.missingByColumn ?? []).map((entry) => `${entry.column} ${formatCount(entry.rows)}`).join(', ');
}

/** Engine warnings with a short title each; the engine's message is already plain words. */
export function warningsInWords(result: Pick<Result, 'warnings'>): WarningView[] {
  return result.warnings.map((warning) => ({
    code: warning.code,
    title: WARNING_TITLE[warning.code] ?? 'Note from the engine',
    message: warning.message,
  }));
}

/**
 * The multiplicity note: how many strata (or tests) were examined and which adjustment
 * the summary treats as primary.
 */
export function multiplicityNote(result: Pick<Result, 'modifier' | 'strata' | 'multiplicity' | 'alpha' | 'slopes'>): string {
  const alpha = `${percentText(result.alpha)} %`;
  if (result.modifier.type === 'continuous') {
    const slopes = result.slopes?.length ?? 0;
    return (
      `${result.modifier.column} is continuous, so effect modification rests on one product term and its single test. ` +
      `The ${slopes} simple slope${slopes === 1 ? '' : 's'} and the Johnson-Neyman boundaries describe that one model and are not adjusted for multiplicity.`
    );
  }
  const k = result.strata.length;
  const base = `The intervention's effect was estimated in ${k} strata of ${result.modifier.column}, so ${k} within-stratum tests were made.`;
  const judge = ' Judge effect modification by the interaction tests, not by which strata reach significance.';
  if (result.multiplicity === 'none') {
    // With k independent tests at level α, P(at least one false alarm) = 1 − (1 − α)^k.
    const familywise = 1 - (1 - result.alpha) ** k;
    return `${base} No adjustment was chosen: with ${k} tests at the ${alpha} level the chance of at least one false alarm can reach ${fixed(familywise * 100, 0)} %. Holm- and Benjamini-Hochberg-adjusted p-values are shown as well.${judge}`;
  }
  const what =
    result.multiplicity === 'holm'
      ? 'which keeps the chance of any false alarm across them at or below'
      : 'which keeps the expected share of false alarms among the significant strata at or below';
  return `${base} The primary p-values use the ${MULTIPLICITY_LABEL[result.multiplicity]} adjustment across the ${k} strata, ${what} ${alpha}.${judge}`;
}

/**
 * The Johnson-Neyman boundaries in words, e.g. "The intervention's effect is significant
 * at the 5 % level where frailty_score is below 4.2 (observed range 1.0 to 9.0)."
 *
 * The significance region on the whole line follows from the engine's `significant`
 * (outside or inside the boundaries, everywhere or nowhere; with one boundary, above it
 * for "outside" and below it for "inside"), then is intersected with the observed range.
 */
export function johnsonNeymanSentence(
  jn: NonNullable<Result['johnsonNeyman']>,
  options: { modifier: string; alpha: number; subject?: string },
): string {
  const subject = options.subject ?? "The intervention's effect";
  const decimals = modifierDecimals(jn.observed);
  const show = (value: number) => fixed(value, decimals);
  const [min, max] = jn.observed;
  const range = `(observed range ${show(min)} to ${show(max)})`;
  const level = `at the ${percentText(options.alpha)} % level`;
  const bounds: readonly number[] = jn.bounds ?? [];

  // Significant intervals on the real line.
  let regions: [number, number][];
  if (jn.significant === 'everywhere') regions = [[-Infinity, Infinity]];
  else if (jn.significant === 'nowhere') regions = [];
  else if (bounds.length === 0) regions = [];
  else if (bounds.length === 1) regions = jn.significant === 'outside' ? [[bounds[0], Infinity]] : [[-Infinity, bounds[0]]];
  else if (jn.significant === 'outside') regions = [[-Infinity, bounds[0]], [bounds[1], Infinity]];
  else regions = [[bounds[0], bounds[1]]];

  const clipped = regions
    .map(([from, to]) => [Math.max(from, min), Math.min(to, max)] as [number, number])
    .filter(([from, to]) => to > from);
  const outsideBounds = bounds.filter((bound) => bound < min || bound > max);
  const boundaryNote =
    bounds.length > 0 && outsideBounds.length === bounds.length
      ? `; the Johnson-Neyman boundar${bounds.length === 1 ? 'y' : 'ies'} (${bounds.map(show).join(' and ')}) lie${bounds.length === 1 ? 's' : ''} outside the observed range`
      : '';

  if (clipped.length === 0) {
    return `${subject} is not significant ${level} anywhere in the observed range of ${options.modifier} (${show(min)} to ${show(max)})${boundaryNote}.`;
  }
  if (clipped.length === 1 && clipped[0][0] <= min && clipped[0][1] >= max) {
    return `${subject} is significant ${level} across the whole observed range of ${options.modifier} (${show(min)} to ${show(max)})${boundaryNote}.`;
  }
  const pieces = clipped.map(([from, to]) => {
    if (from <= min) return `below ${show(to)}`;
    if (to >= max) return `above ${show(from)}`;
    return `between ${show(from)} and ${show(to)}`;
  });
  return `${subject} is significant ${level} where ${options.modifier} is ${pieces.join(' or ')} ${range}.`;
}

/**
 * The smallest interaction the data could detect, per level: the engine's
 * normal-approximation planning block (Brookes et al., J Clin Epidemiol 2004;57:229).
 */
export function planningInWords(result: Pick<Result, 'planning'>, measure: MeasureInfo): string | null {
  const { planning } = result;
  const clauses = planning.levels
    .filter((level) => level.detectable.lower !== null && level.detectable.upper !== null)
    .map((level) => {
      const lower = formatNumber(level.detectable.lower, measure.ratio ? 'ratio' : measure.kind);
      const upper = formatNumber(level.detectable.upper, measure.ratio ? 'ratio' : measure.kind);
      return `below ${lower} or above ${upper} (${level.level})`;
    });
  if (clauses.length === 0) return null;
  const what = measure.ratio ? `a ${measure.interactionName}` : `an interaction (${measure.interactionName})`;
  return (
    `With ${formatCount(planning.n)} rows, ${what} would be detected with ${percentText(planning.targetPower)} % power at the ` +
    `${percentText(planning.alpha)} % level only if it were ${clauses.join('; ')}; a smaller interaction could easily be missed.`
  );
}

/** A joint cell named by its two levels: "call_back = 0, age_band = 18-44". */
export function referenceText(reference: { exposure: string; modifier: string }, exposure: string, modifier: string): string {
  return `${exposure} = ${reference.exposure}, ${modifier} = ${reference.modifier}`;
}
