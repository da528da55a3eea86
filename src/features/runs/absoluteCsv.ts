/**
 * The CSV records of the standardized absolute effects and the E-values (resultCsv.ts
 * places them after the stratum effects), with unrounded numbers.
 */
import type { Result } from '@/engine/boundary/schemas';
import { nntText } from './absoluteEffectsView';

/** A record by the names of resultCsv.ts's CSV_COLUMNS (not imported from there, which imports this file). */
type CsvColumn = 'section' | 'level' | 'arm' | 'measure' | 'estimate' | 'lower' | 'upper' | 'p' | 'p_holm' | 'p_bh' | 'n' | 'events' | 'statistic' | 'df' | 'note';
type CsvRow = Partial<Record<CsvColumn, string | number | null>>;

function ordered<T extends { level: string }>(levels: readonly string[], entries: readonly T[]): T[] {
  const rank = (level: string) => (levels.includes(level) ? levels.indexOf(level) : levels.length);
  return [...entries].sort((a, b) => rank(a.level) - rank(b.level));
}

/** Standardized risks under each arm, RD, NNT and interaction contrast per level ("absolute" records). */
export function absoluteRows(result: Result, levels: readonly string[]): CsvRow[] {
  const standardized = result.standardized ?? null;
  if (standardized === null) return [];
  const method = `standardized over the level's rows; delta method, ${standardized.variance} variance`;
  const rows: CsvRow[] = [];
  for (const entry of ordered(levels, standardized.levels)) {
    const base = { section: 'absolute', level: entry.level };
    for (const [arm, risk] of [[result.exposure.reference, entry.riskUnexposed], [result.exposure.level, entry.riskExposed]] as const) {
      rows.push({ ...base, arm, measure: 'standardized risk', estimate: risk.estimate, lower: risk.lower, upper: risk.upper, n: entry.n, note: method });
    }
    const rd = entry.riskDifference;
    rows.push({ ...base, measure: `standardized RD of ${result.exposure.column} = ${result.exposure.level} vs ${result.exposure.reference}`, estimate: rd.estimate, lower: rd.lower, upper: rd.upper, p: rd.p, n: entry.n, note: method });
    rows.push({
      ...base,
      measure: `NNT ${entry.nnt.direction === null ? '' : `to ${entry.nnt.direction}`}`.trim(),
      estimate: entry.nnt.estimate,
      lower: entry.nnt.lower.value,
      upper: entry.nnt.upper.value,
      note: `${nntText(entry.nnt)}; lower and upper are 1/|RD limit| of the RD's lower and upper limits${entry.nnt.throughInfinity ? ', and the interval runs through infinity between them' : ''}`,
    });
    if (entry.interactionContrast) {
      const ic = entry.interactionContrast;
      rows.push({ ...base, measure: `interaction contrast (RD − RD of ${standardized.reference})`, estimate: ic.estimate, lower: ic.lower, upper: ic.upper, p: ic.p, note: method });
    }
  }
  return rows;
}

/** E-values of each stratum ratio and of its interval limit nearer 1 ("e-value" records). */
export function eValueRows(result: Result, levels: readonly string[]): CsvRow[] {
  const eValues = result.eValues ?? null;
  if (eValues === null) return [];
  const rows: CsvRow[] = [];
  for (const entry of ordered(levels, eValues.entries)) {
    const conversion =
      entry.conversion === 'square-root'
        ? `odds ratio square-rooted: outcome in ${entry.prevalence} of the level's rows (over ${eValues.commonAbove})`
        : entry.conversion === 'rare-outcome'
          ? `odds ratio read as a risk ratio: outcome in ${entry.prevalence} of the level's rows (not over ${eValues.commonAbove})`
          : `${entry.ratio} used as it is`;
    rows.push({ section: 'e-value', level: entry.level, measure: `E-value of the ${entry.ratio}`, estimate: entry.estimate, note: `VanderWeele and Ding 2017; ${conversion}` });
    rows.push({ section: 'e-value', level: entry.level, measure: 'E-value of the interval limit nearer 1', estimate: entry.limit, note: '1 when the interval includes 1' });
  }
  return rows;
}
