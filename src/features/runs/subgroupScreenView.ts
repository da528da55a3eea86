/**
 * A subgroup screen in words, rows and a figure: the sentence counting the modifiers
 * examined, one table per modifier (stratum effects or effects at chosen points, and the
 * interaction test with raw, Holm and BH p), the forest plot grouped by modifier, and the
 * standing of the screen against the register (exploratory unless every modifier was
 * prespecified). Pure: the page, the plot island and the CSV read it.
 */
import type { Result, ScreenBlock, ScreenEntry } from '@/engine/boundary/schemas';
import { formatInterval, formatNumber, formatP, measureInfo, type MeasureInfo } from './resultFormat';

const SMALL_NUMBERS = ['no', 'one', 'two', 'three', 'four', 'five', 'six', 'seven', 'eight', 'nine', 'ten', 'eleven', 'twelve'];
const TEST_NAME: Record<ScreenEntry['interaction']['test'], string> = {
  'likelihood-ratio': 'likelihood-ratio test',
  F: 'F test',
  wald: 'Wald test',
  'wald-robust': 'robust Wald test',
};

function countWord(n: number): string {
  return SMALL_NUMBERS[n] ?? n.toLocaleString('en-GB');
}

function capitalised(text: string): string {
  return text.charAt(0).toUpperCase() + text.slice(1);
}

/** One row of a modifier's table or of the forest plot. */
export interface ScreenEffectRow {
  label: string;
  estimate: number | null;
  lower: number | null;
  upper: number | null;
  p: number | null;
}

/** The intervention's effect within each level (categorical) or at each chosen point (continuous). */
export function screenEffectRows(entry: ScreenEntry): ScreenEffectRow[] {
  if (entry.type === 'categorical') {
    return entry.strata.map((stratum) => ({
      label: stratum.level === entry.reference ? `${stratum.level} (reference)` : stratum.level,
      estimate: stratum.effect.estimate, lower: stratum.effect.lower, upper: stratum.effect.upper, p: stratum.effect.p,
    }));
  }
  return entry.slopes.map((slope) => ({ label: `${slope.label} (${formatNumber(slope.at, 'modifier')})`, estimate: slope.estimate, lower: slope.lower, upper: slope.upper, p: slope.p }));
}

/** The interaction test in words: "likelihood-ratio test, χ² 2.77 on 2 df". */
export function interactionTestInWords(test: ScreenEntry['interaction']): string {
  const statistic = formatNumber(test.statistic, 'statistic');
  if (test.test === 'F') return `${TEST_NAME.F}, F ${statistic} on ${test.df} and ${test.df2 ?? '—'} df`;
  return `${TEST_NAME[test.test]}, χ² ${statistic} on ${test.df} df`;
}

/** The sentence that counts the modifiers examined and how many interaction tests hold after adjustment. */
export function screenSentence(screen: ScreenBlock, alpha: number): string {
  const examined = screen.examined;
  const raw = screen.modifiers.filter((entry) => entry.interaction.p !== null && entry.interaction.p < alpha).length;
  const holm = screen.modifiers.filter((entry) => entry.pAdjusted.holm !== null && entry.pAdjusted.holm < alpha).length;
  const bh = screen.modifiers.filter((entry) => entry.pAdjusted.bh !== null && entry.pAdjusted.bh < alpha).length;
  const level = `${+(alpha * 100).toFixed(2)} %`;
  const first = `${capitalised(countWord(examined))} modifier${examined === 1 ? ' was' : 's were'} examined`;
  const tail =
    raw === 0
      ? `no interaction test fell below ${level}`
      : `${countWord(raw)} interaction test${raw === 1 ? '' : 's'} fell below ${level} before adjustment, ${countWord(holm)} after Holm's adjustment and ${countWord(bh)} after Benjamini-Hochberg's`;
  return `${first}; ${tail}. With ${countWord(examined)} modifiers tested, about ${formatNumber(examined * alpha, 'statistic')} would fall below ${level} by chance alone when none modifies the effect.`;
}

/** Whether each modifier was prespecified (the register), as the page shows it. */
export interface ModifierStanding {
  column: string;
  planned: boolean;
  reason: string;
}

/** The screen's standing: exploratory unless every modifier was prespecified; which were not, in words. */
export function screenStandingInWords(standings: readonly ModifierStanding[], declared: boolean): { exploratory: boolean; text: string } {
  const unplanned = standings.filter((standing) => !standing.planned);
  if (declared) return { exploratory: false, text: 'The whole screen was declared prespecified before the data arrived.' };
  if (unplanned.length === 0) return { exploratory: false, text: 'Every modifier in this screen was on the initiative’s register of prespecified modifiers before the data arrived.' };
  const names = unplanned.map((standing) => `“${standing.column}”`);
  const listed = names.length === 1 ? names[0] : `${names.slice(0, -1).join(', ')} and ${names[names.length - 1]}`;
  return {
    exploratory: true,
    text: `Exploratory: ${listed} ${unplanned.length === 1 ? 'was' : 'were'} not prespecified on the initiative’s register before the data arrived, so the screen’s findings are hypotheses to test.`,
  };
}

/** One table row as text: the label, the effect with its interval and p. */
export function effectRowText(row: ScreenEffectRow, measure: MeasureInfo): { effect: string; p: string } {
  return { effect: formatInterval(row.estimate, row.lower, row.upper, measure.kind), p: formatP(row.p) };
}

/** The forest plot's rows, grouped by modifier: a heading row per modifier, then its effects. */
export function screenForestRows(result: Pick<Result, 'screen'>): { group: string; row: ScreenEffectRow }[] {
  return (result.screen?.modifiers ?? []).flatMap((entry) => screenEffectRows(entry).map((row) => ({ group: entry.column, row })));
}

export { measureInfo };
