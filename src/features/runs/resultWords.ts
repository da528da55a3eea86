/**
 * The sentences of a result page: the engine's warnings with a title each, the rows left
 * out and why, the multiplicity note and the smallest detectable interaction in words,
 * and the names of the omnibus tests (a continuous modifier's range: continuousWords.ts).
 */
import type { Result } from '@/engine/boundary/schemas';
import { MULTIPLICITY_LABEL } from '../analyses/specRules';
import { percentText } from '../analyses/specWords';
import { fixed, formatCount, formatNumber, type MeasureInfo } from './resultFormat';

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

/**
 * Engine warnings with a short title each; the engine's message is already plain words.
 * A warning the engine gives once per level is said once: one title, and for the
 * preventive-intervention warning one sentence naming the levels.
 */
export function warningsInWords(result: Pick<Result, 'warnings'>): WarningView[] {
  const byCode = new Map<string, Result['warnings']>();
  for (const warning of result.warnings) byCode.set(warning.code, [...(byCode.get(warning.code) ?? []), warning]);
  return [...byCode.entries()].map(([code, warnings]) => {
    const levels = warnings.flatMap((warning) => (warning.level ? [warning.level] : []));
    const message =
      code === 'PREVENTIVE_EXPOSURE' && levels.length > 1
        ? `In ${levels.slice(0, -1).join(', ')} and ${levels[levels.length - 1]}, a combination has a lower risk than the reference: the intervention lowers risk there. ` +
          'RERI, AP and S are easier to read after recoding so that the lowest-risk combination is the reference (the analysis form\'s preventive option).'
        : warnings.map((warning) => warning.message).join(' ');
    return { code, title: WARNING_TITLE[code] ?? 'Note from the engine', message };
  });
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
      `The effect at the ${slopes} marked point${slopes === 1 ? '' : 's'} and the Johnson-Neyman boundaries describe that one model and are not adjusted for multiplicity.`
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
  // The engine's power for an interaction of the given size (as large as the main effect unless the analysis set one).
  const powers = planning.levels
    .filter((level) => level.power !== null && level.interaction !== null)
    .map((level) => `${fixed((level.power as number) * 100, 0)} % (${level.level})`);
  const sized = planning.levels.find((level) => level.interaction !== null)?.interaction ?? null;
  const size = planning.interactionSource === 'main-effect' ? 'as large as the main effect' : 'of the size set in the analysis';
  const powerClause = powers.length > 0 && sized !== null
    ? ` For an interaction ${size} (${measure.interactionName} ${formatNumber(sized, measure.ratio ? 'ratio' : measure.kind)}), the power is ${powers.join(', ')}.`
    : '';
  return (
    `With ${formatCount(planning.n)} rows, ${what} would be detected with ${percentText(planning.targetPower)} % power at the ` +
    `${percentText(planning.alpha)} % level only if it were ${clauses.join('; ')}; a smaller interaction could easily be missed.${powerClause}`
  );
}

/** A joint cell named by its two levels: "call_back = 0, age_band = 18-44". */
export function referenceText(reference: { exposure: string; modifier: string }, exposure: string, modifier: string): string {
  return `${exposure} = ${reference.exposure}, ${modifier} = ${reference.modifier}`;
}
