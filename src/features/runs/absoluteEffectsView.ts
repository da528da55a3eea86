/**
 * The standardized absolute effects (risks under each arm, risk difference, number needed
 * to treat, interaction contrast) and the E-values of a result as display cells and
 * sentences, for the results page, the CSV and the brief. Built from the engine's result
 * alone; the methods are in shared/design/methods.md ("Rates, doses, absolute effects").
 */
import type { NumberNeeded, Result } from '@/engine/boundary/schemas';
import { displayLevels, formatCount, intervalCell, numberCell, pCell, type IntervalCell, type NumberCell } from './resultFormat';

export interface AbsoluteRowView {
  level: string;
  isReference: boolean;
  n: NumberCell;
  riskUnexposed: IntervalCell;
  riskExposed: IntervalCell;
  riskDifference: IntervalCell & { p: NumberCell };
  nnt: { text: string; estimate: number | null; testId: string };
  /** Null for the reference level. */
  interactionContrast: (IntervalCell & { p: NumberCell }) | null;
}

export interface AbsoluteEffectsView {
  rows: AbsoluteRowView[];
  reference: string;
  /** What the table shows, in one paragraph. */
  explanation: string;
  /** Where the intervention prevents the most events (or null when no level has fewer events with it). */
  headline: string | null;
}

/** A number needed, rounded up to a whole patient (common practice), e.g. "37". */
function wholeNumber(value: number | null): string {
  return value === null || !Number.isFinite(value) ? '—' : formatCount(Math.ceil(value));
}

function endText(end: NumberNeeded['lower']): string {
  return end.value === null || end.direction === null ? '∞' : `${wholeNumber(end.value)} to ${end.direction}`;
}

/**
 * The NNT with its interval in words (Altman, BMJ 1998;317:1309): "37 to treat (21 to 189)",
 * or, when the risk difference's interval includes 0, "133 to treat (64 to treat … ∞ … 1,851
 * to harm)". Numbers are rounded up to whole patients.
 */
export function nntText(nnt: NumberNeeded): string {
  if (nnt.estimate === null || nnt.direction === null) return 'no difference (∞)';
  const point = `${wholeNumber(nnt.estimate)} to ${nnt.direction}`;
  if (nnt.lower.value === null && nnt.upper.value === null) return point;
  if (nnt.throughInfinity) return `${point} (${endText(nnt.lower)} … ∞ … ${endText(nnt.upper)})`;
  const ends = [nnt.lower.value, nnt.upper.value].filter((value): value is number => value !== null).sort((a, b) => a - b);
  return `${point} (${ends.map(wholeNumber).join(' to ')})`;
}

/** The standardized absolute effects of a result as table rows, or null when the run did not ask for them. */
export function absoluteEffectsView(result: Result): AbsoluteEffectsView | null {
  const standardized = result.standardized ?? null;
  if (standardized === null) return null;
  const order = displayLevels(result);
  const entries = [...standardized.levels].sort((a, b) => order.indexOf(a.level) - order.indexOf(b.level));
  const rows = entries.map((entry) => ({
    level: entry.level,
    isReference: entry.level === standardized.reference,
    n: numberCell(entry.n, 'count', `absolute-n-${entry.level}`),
    riskUnexposed: intervalCell(entry.riskUnexposed, 'percent', `absolute-risk0-${entry.level}`),
    riskExposed: intervalCell(entry.riskExposed, 'percent', `absolute-risk1-${entry.level}`),
    riskDifference: { ...intervalCell(entry.riskDifference, 'risk-difference', `absolute-rd-${entry.level}`), p: pCell(entry.riskDifference.p, `absolute-rd-p-${entry.level}`) },
    nnt: { text: nntText(entry.nnt), estimate: entry.nnt.estimate, testId: `absolute-nnt-${entry.level}` },
    interactionContrast: entry.interactionContrast
      ? { ...intervalCell(entry.interactionContrast, 'risk-difference', `absolute-ic-${entry.level}`), p: pCell(entry.interactionContrast.p, `absolute-ic-p-${entry.level}`) }
      : null,
  }));
  const { exposure, modifier, outcome } = result;
  const variance = standardized.variance === 'model' ? 'model-based' : standardized.variance;
  const explanation =
    `Within each level of ${modifier.column}, the risk of ${outcome.column} averaged over that level's patients as the model predicts it with ${exposure.column} set to ${exposure.reference} and to ${exposure.level} ` +
    `(standardized over the level's own covariates), their difference (RD; below 0 means fewer events with ${exposure.column} = ${exposure.level}), ` +
    `the number needed to treat for one event fewer ("to treat") or one more ("to harm"), and each level's RD minus the RD of ${standardized.reference} (interaction contrast). ` +
    `Delta-method intervals with the ${variance} variance of the fit; an RD interval that includes 0 gives an NNT interval through infinity.`;
  const preventing = entries.filter((entry) => entry.riskDifference.estimate !== null && entry.riskDifference.estimate < 0);
  const best = preventing.sort((a, b) => (a.riskDifference.estimate as number) - (b.riskDifference.estimate as number))[0];
  const headline = best
    ? `The largest standardized reduction is at ${modifier.column} = ${best.level}: RD ${intervalCell(best.riskDifference, 'risk-difference').text}, ${nntText(best.nnt)}.`
    : null;
  return { rows, reference: standardized.reference, explanation, headline };
}

export interface EValueCell {
  /** "2.31 (limit 1.00)" */
  text: string;
  estimate: number | null;
  limit: number | null;
  testId: string;
}

export interface EValuesView {
  byLevel: Record<string, EValueCell>;
  /** One sentence saying what the E-values mean. */
  sentence: string;
  /** How odds ratios were brought to the risk-ratio scale, and which prevalence was used. */
  basis: string;
}

function two(value: number | null): string {
  return value === null || !Number.isFinite(value) ? '—' : value.toFixed(2);
}

/** The E-values of a result's strata with their sentence, or null when there are none (differences). */
export function eValuesView(result: Result): EValuesView | null {
  const eValues = result.eValues ?? null;
  if (eValues === null || eValues.entries.length === 0) return null;
  const byLevel: Record<string, EValueCell> = {};
  for (const entry of eValues.entries) {
    byLevel[entry.level] = { text: `${two(entry.estimate)} (limit ${two(entry.limit)})`, estimate: entry.estimate, limit: entry.limit, testId: `evalue-${entry.level}` };
  }
  const sentence =
    `E-value: how strong, as a risk ratio with both ${result.exposure.column} and ${result.outcome.column}, a factor left out of the model would have to be to explain away a level's effect entirely; ` +
    `the second number is the same for moving the interval to include no effect (1 means it already does). Larger numbers mean a more robust finding (VanderWeele and Ding, 2017).`;
  const first = eValues.entries[0];
  const percent = `${Math.round(eValues.commonAbove * 100)} %`;
  let basis: string;
  if (first.ratio !== 'odds ratio') basis = `The ${first.ratio}s are used as they are.`;
  else {
    const common = eValues.entries.filter((entry) => entry.conversion === 'square-root').map((entry) => entry.level);
    basis =
      `Odds ratios were square-rooted first where the outcome is common (over ${percent} of the level's rows, both arms: ${common.length > 0 ? common.join(', ') : 'no level'}) and read as risk ratios elsewhere.`;
  }
  return { byLevel, sentence, basis };
}
