/**
 * CSV records of a continuous intervention's slopes, the note that the additive measures
 * do not apply, the test for trend across an ordered modifier, and the profile
 * predictions with the covariate values they hold (resultCsv.ts adds them after the
 * interaction records). Numbers unrounded.
 */
import type { Result } from '@/engine/boundary/schemas';
import { scoresText } from '../extracts/orderedScores';
import { predictionNote } from './doseTrendView';

type Field = 'section' | 'level' | 'arm' | 'measure' | 'estimate' | 'lower' | 'upper' | 'p' | 'statistic' | 'df' | 'note';
export type DoseTrendCsvRow = Partial<Record<Field, string | number | null>>;

export function doseTrendCsvRows(result: Result): DoseTrendCsvRow[] {
  const rows: DoseTrendCsvRow[] = [];
  const exposure = result.exposure.column;
  const dose = result.dose;
  if (dose) {
    const interval = dose.interval === 't' ? 't interval' : 'normal (z) interval';
    for (const slope of dose.slopes) {
      rows.push({ section: 'dose-slope', level: slope.level, measure: `slope of ${exposure} per unit (${dose.scale} scale)`, estimate: slope.estimate, lower: slope.lower, upper: slope.upper, p: slope.p, note: `${interval}; se ${slope.se}` });
    }
    for (const difference of dose.differences) {
      rows.push({ section: 'dose-slope-difference', level: difference.level, measure: `slope minus the slope in ${result.modifier.reference}`, estimate: difference.estimate, lower: difference.lower, upper: difference.upper, p: difference.p, note: `${interval}; se ${difference.se}` });
    }
  }
  if (result.additiveNote) rows.push({ section: 'additive', measure: 'not applicable', note: result.additiveNote });
  const trend = result.trend;
  if (trend) {
    const scores = `scores ${scoresText(Object.fromEntries(trend.scores.map((entry) => [entry.level, entry.score])))}`;
    rows.push({ section: 'trend', measure: `${trend.term}: change per unit of score (linear-predictor scale), Wald`, estimate: trend.estimate, lower: trend.lower, upper: trend.upper, p: trend.wald.p, statistic: trend.wald.statistic, df: 1, note: scores });
    if (trend.ratio) rows.push({ section: 'trend', measure: 'ratio per unit of score', estimate: trend.ratio.estimate, lower: trend.ratio.lower, upper: trend.ratio.upper, p: trend.wald.p });
    if (trend.likelihoodRatio) rows.push({ section: 'trend', measure: 'likelihood-ratio test', statistic: trend.likelihoodRatio.statistic, df: trend.likelihoodRatio.df, p: trend.likelihoodRatio.p });
  }
  const predictions = result.predictions;
  if (predictions) {
    rows.push({ section: 'prediction', measure: 'covariates held', note: predictionNote(result) });
    for (const held of predictions.covariates) {
      rows.push({ section: 'prediction-covariate', level: held.column, measure: held.held === 'mean' ? 'mean' : 'most common level', estimate: held.value, note: held.level });
    }
    const what = result.outcome.type === 'binary' ? 'predicted risk' : 'predicted mean';
    for (const line of predictions.lines) {
      for (const point of line.points) {
        rows.push({ section: 'prediction', level: point.level ?? point.x, arm: line.label, measure: what, estimate: point.estimate, lower: point.lower, upper: point.upper, note: `linear predictor ${point.linearPredictor}, se ${point.se}` });
      }
    }
  }
  return rows;
}
