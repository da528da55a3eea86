/**
 * The subgroup screen's records of the results CSV: the sentence counting the modifiers,
 * each modifier's effects (within each level, or at each chosen point) and its interaction
 * test with raw, Holm and Benjamini-Hochberg p, unrounded.
 */
import type { Result } from '@/engine/boundary/schemas';
import { measureInfo } from './resultFormat';
import { screenSentence } from './subgroupScreenView';

type ScreenCsvRow = Record<string, string | number | null>;

export function screenRows(result: Result): ScreenCsvRow[] {
  const screen = result.screen;
  if (!screen) return [];
  const measure = measureInfo(result);
  const exposure = result.exposure.column;
  const rows: ScreenCsvRow[] = [{ section: 'screen', measure: 'modifiers examined', n: screen.examined, note: screenSentence(screen, result.alpha) }];
  for (const entry of screen.modifiers) {
    for (const stratum of entry.strata) {
      rows.push({
        section: 'screen-effect', level: `${entry.column} = ${stratum.level}`, measure: `${measure.code} of ${exposure} within ${entry.column} = ${stratum.level}`,
        estimate: stratum.effect.estimate, lower: stratum.effect.lower, upper: stratum.effect.upper, p: stratum.effect.p, n: stratum.n, events: stratum.events,
        note: stratum.level === entry.reference ? 'reference level' : null,
      });
    }
    for (const slope of entry.slopes) {
      rows.push({
        section: 'screen-effect', level: `${entry.column} at ${slope.at}`, measure: `${measure.code} of ${exposure} at ${entry.column} = ${slope.at}`,
        estimate: slope.estimate, lower: slope.lower, upper: slope.upper, p: slope.p, note: slope.label,
      });
    }
    rows.push({
      section: 'screen-interaction', level: entry.column, measure: `${entry.interaction.test} test of ${exposure} × ${entry.column}`,
      p: entry.interaction.p, p_holm: entry.pAdjusted.holm, p_bh: entry.pAdjusted.bh, n: entry.n, statistic: entry.interaction.statistic,
      df: entry.interaction.df2 === null ? entry.interaction.df : `${entry.interaction.df}, ${entry.interaction.df2}`,
      note: `own model: ${exposure}, ${entry.column}, their product and the covariates; ${entry.dropped} rows left out for missing values`,
    });
  }
  return rows;
}
