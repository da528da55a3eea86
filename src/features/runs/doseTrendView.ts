/**
 * The parts of a result that a continuous intervention (dose), an ordered modifier and
 * the profile predictions add, as views for the results page, the CSV and the brief:
 * slopes per level and their differences, the sentence that the additive measures do not
 * apply, the test for trend, and the note on the covariate values the predictions use.
 */
import type { Result } from '@/engine/boundary/schemas';
import { scoresText } from '../extracts/orderedScores';
import { fixed, formatNumber, formatP, intervalCell, pCell, type IntervalCell, type NumberCell } from './resultFormat';

export interface SlopeLevelView {
  level: string;
  slope: IntervalCell;
  se: NumberCell;
  p: NumberCell;
}

export interface DoseTrendView {
  /** Continuous intervention with a categorical modifier. */
  dose: { heading: string; scaleNote: string; slopes: SlopeLevelView[]; differences: SlopeLevelView[] } | null;
  /** Why RERI, AP, S and the joint table are absent (a continuous intervention). */
  additiveNote: string | null;
  trend: { heading: string; scores: string; estimate: IntervalCell; ratio: IntervalCell | null; wald: string; likelihoodRatio: string | null; p: NumberCell } | null;
  /** What the profile plot's predictions hold the covariates at. */
  predictionNote: string | null;
}

const SCALE_WORDS: Record<NonNullable<Result['dose']>['scale'], string> = {
  'log-odds': 'change in the log odds',
  'log-risk': 'change in the log risk',
  identity: 'change in the outcome',
};

function pText(p: number | null): string {
  const text = formatP(p);
  return text.startsWith('<') ? `p ${text}` : `p = ${text}`;
}

/** The covariate values the predictions hold, in words (null for results stored before they were recorded). */
export function predictionNote(result: Pick<Result, 'predictions'>): string | null {
  const predictions = result.predictions;
  if (!predictions) return null;
  if (predictions.covariates.length === 0) return 'Predicted values come from the fitted model; it has no covariates to hold.';
  const held = predictions.covariates.map((c) => (c.held === 'mean' ? `${c.column} at its mean, ${fixed(c.value, 2)}` : `${c.column} at its most common level, ${c.level}`));
  return `Predicted values hold the covariates at stated values: ${held.join('; ')} (continuous covariates at their means, categorical ones at their most common level).`;
}

export function doseTrendView(result: Result): DoseTrendView {
  const dose = result.dose;
  const column = result.exposure.column;
  const slopeRow = (prefix: string) => (entry: NonNullable<Result['dose']>['slopes'][number]): SlopeLevelView => ({
    level: entry.level,
    slope: intervalCell(entry, 'difference', `${prefix}-${entry.level}`),
    se: { text: formatNumber(entry.se, 'statistic'), value: entry.se },
    p: pCell(entry.p, `${prefix}-p-${entry.level}`),
  });
  const trend = result.trend;
  return {
    dose: dose
      ? {
          heading: `Slope of ${column} within each level of ${result.modifier.column}`,
          scaleNote:
            `The ${SCALE_WORDS[dose.scale]} per unit of ${column} (b_A + b_A·m), with ${dose.interval === 't' ? 't' : 'normal (z)'} intervals; ` +
            `the differences are each level's slope minus the reference level's (b_A·m).`,
          slopes: dose.slopes.map(slopeRow('dose-slope')),
          differences: dose.differences.map(slopeRow('dose-difference')),
        }
      : null,
    additiveNote: result.additiveNote ?? null,
    trend: trend
      ? {
          heading: `Test for trend across the ordered levels of ${result.modifier.column}`,
          scores: scoresText(Object.fromEntries(trend.scores.map((entry) => [entry.level, entry.score]))),
          estimate: intervalCell(trend, 'difference', 'trend-estimate'),
          ratio: trend.ratio ? intervalCell(trend.ratio, 'ratio', 'trend-ratio') : null,
          wald: `Wald χ² = ${formatNumber(trend.wald.statistic, 'statistic')} on 1 df, ${pText(trend.wald.p)}`,
          likelihoodRatio: trend.likelihoodRatio
            ? `likelihood-ratio χ² = ${formatNumber(trend.likelihoodRatio.statistic, 'statistic')} on 1 df, ${pText(trend.likelihoodRatio.p)}`
            : null,
          p: pCell(trend.wald.p, 'trend-p'),
        }
      : null,
    predictionNote: predictionNote(result),
  };
}
