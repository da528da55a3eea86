/**
 * What a continuous intervention (dose), an ordered modifier and the profile predictions
 * add to a brief: the sentences of the methods paragraph, the slopes per level for the key
 * table, and the test for trend beside the interaction test. No counts are shown here.
 */
import type { Result } from '@/engine/boundary/schemas';
import { scoresText } from '../extracts/orderedScores';
import { predictionNote } from '../runs/doseTrendView';
import { formatInterval, formatP, measureInfo } from '../runs/resultFormat';

function pWords(p: number | null): string {
  const text = formatP(p);
  return text.startsWith('<') ? `p ${text}` : `p = ${text}`;
}

/** Methods sentences for a dose, a test for trend and predictions at stated covariate values (empty when none applies). */
export function doseTrendMethods(result: Result): string[] {
  const out: string[] = [];
  const exposure = result.exposure.column;
  if (result.exposure.type === 'continuous') {
    out.push(
      `${exposure} was analysed as a continuous dose: its effect is a slope per unit, ` +
        (result.modifier.type === 'categorical'
          ? `estimated within each level of ${result.modifier.column} as the main term plus that level's product term, with its variance from the model's covariance matrix, and compared between levels by the product terms and the omnibus test.`
          : `given at chosen values of ${result.modifier.column} with Johnson-Neyman boundaries.`) +
        ' The additive measures (RERI, AP, S) were not computed: they need two intervention levels and do not apply to a dose.',
    );
  }
  const trend = result.trend;
  if (trend) {
    out.push(
      `${result.modifier.column} is ordered; a test for trend replaced the product terms with one product of ${exposure} and the level scores ` +
        `(${scoresText(Object.fromEntries(trend.scores.map((entry) => [entry.level, entry.score])))}), tested by Wald${trend.likelihoodRatio ? ' and likelihood-ratio' : ''} tests.`,
    );
  }
  const note = predictionNote(result);
  if (note) out.push(note);
  return out;
}

/** A dose with a categorical modifier: its effect per unit within each level, for the key table. */
export function doseSlopeRows(result: Result): { label: string; effect: string; p: string }[] | null {
  if (result.exposure.type !== 'continuous' || result.modifier.type !== 'categorical') return null;
  const measure = measureInfo(result);
  return result.strata.map((stratum) => ({
    label: `${result.modifier.column} = ${stratum.level} (${measure.name} per unit of ${result.exposure.column})`,
    effect: formatInterval(stratum.effect.estimate, stratum.effect.lower, stratum.effect.upper, measure.kind),
    p: formatP(stratum.effect.p),
  }));
}

/** The test for trend in one sentence, for beside the interaction test (empty when there is none). */
export function trendSentence(result: Result): string {
  const trend = result.trend;
  if (!trend) return '';
  return ` Test for trend across the ordered levels of ${result.modifier.column}: Wald ${pWords(trend.wald.p)}${trend.likelihoodRatio ? `, likelihood-ratio ${pWords(trend.likelihoodRatio.p)}` : ''}.`;
}
