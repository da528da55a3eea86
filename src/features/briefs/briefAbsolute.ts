/**
 * The brief's absolute effects (standardized risks, RD, NNT, interaction contrast) and
 * E-values, built through the results page's own view (absoluteEffectsView.ts). No count
 * is printed here (the standardized risks are model estimates, not counts); small strata
 * carry the same caution as in the key table.
 */
import type { Result } from '@/engine/boundary/schemas';
import { absoluteEffectsView, eValuesView } from '../runs/absoluteEffectsView';
import { isSmallStratum, type BriefCounts } from './briefCounts';

export interface BriefAbsolute {
  /** The header row then one row per level, as text (HTML and PDF draw the same cells). */
  table: string[][];
  /** Per row (after the header): whether the stratum is small. */
  small: boolean[];
  explanation: string;
  headline: string | null;
}

export interface BriefEValues {
  lines: string[];
  sentence: string;
}

export function briefAbsolute(result: Result, counts: BriefCounts, ciLabel: string): BriefAbsolute | null {
  const view = absoluteEffectsView(result);
  if (view === null) return null;
  const { exposure, modifier } = result;
  const header = [
    modifier.column,
    `risk, ${exposure.column} = ${exposure.reference}`,
    `risk, ${exposure.column} = ${exposure.level}`,
    `RD (${ciLabel})`,
    'NNT',
    `RD − RD of ${view.reference} (${ciLabel})`,
  ];
  const rows = view.rows.map((row) => [
    `${row.level}${row.isReference ? ' (reference)' : ''}`,
    row.riskUnexposed.text,
    row.riskExposed.text,
    row.riskDifference.text,
    row.nnt.text,
    row.interactionContrast?.text ?? '—',
  ]);
  return {
    table: [header, ...rows],
    small: view.rows.map((row) => isSmallStratum(counts, row.level)),
    explanation: view.explanation,
    headline: view.headline,
  };
}

export function briefEValues(result: Result): BriefEValues | null {
  const view = eValuesView(result);
  if (view === null) return null;
  const lines = Object.entries(view.byLevel).map(([level, cell]) => `${result.modifier.column} = ${level}: ${cell.text}`);
  return { lines, sentence: `${view.sentence} ${view.basis}` };
}

/** The methods paragraph's sentences for the absolute effects and the E-values. */
export function absoluteMethodsSentences(result: Result): string[] {
  const out: string[] = [];
  const standardized = result.standardized ?? null;
  if (standardized !== null) {
    out.push(
      `Absolute effects were standardized within each level of ${result.modifier.column}: the model's predicted risks of that level's patients were averaged with ${result.exposure.column} set to each arm, ` +
        `and their difference (RD) was given a delta-method interval using the ${standardized.variance === 'model' ? 'model-based' : standardized.variance} covariance of the fit; ` +
        'the number needed to treat is 1/|RD| (Altman, BMJ 1998), and each level\'s RD was compared with the reference level\'s.',
    );
  }
  const eValues = result.eValues ?? null;
  if (eValues !== null && eValues.entries.length > 0) {
    const odds = eValues.entries[0].ratio === 'odds ratio';
    out.push(
      `E-values follow VanderWeele and Ding (Ann Intern Med 2017)${odds ? `, with odds ratios square-rooted where the outcome was over ${Math.round(eValues.commonAbove * 100)} % of a level's rows` : ''}.`,
    );
  }
  return out;
}
