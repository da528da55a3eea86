/**
 * Crossgrain's crude cross-check of the adjusted model (binary outcomes, categorical
 * modifiers): the 2 × 2 table of each modifier level without covariates, the crude test
 * that the effect is the same in every level (Breslow-Day with Tarone's correction for
 * odds ratios, Woolf's test for risk ratios) set beside the adjusted model's test of all
 * product terms, and the Mantel-Haenszel estimate pooled over the levels, with one
 * sentence comparing crude and adjusted.
 */
import type { Result } from '@/engine/boundary/schemas';
import { percentText } from '../analyses/specWords';
import { formatInterval, formatNumber, formatP, intervalCell, numberCell, pCell, type IntervalCell, type MeasureInfo, type NumberCell } from './resultFormat';
import { OMNIBUS_LABEL } from './resultWords';

export interface CrudeTableRow {
  level: string;
  /** Intervention arm: with and without the event; control arm likewise. */
  exposedEvents: NumberCell;
  exposedOthers: NumberCell;
  controlEvents: NumberCell;
  controlOthers: NumberCell;
  crude: IntervalCell | null;
}

export interface CrudeTestView {
  /** What the test is, in our words, with the trade name after it. */
  name: string;
  text: string;
  p: NumberCell;
}

export interface CrudeCrossCheckView {
  /** Crude against adjusted in one or two sentences. */
  comparison: string;
  adjustedTest: CrudeTestView;
  crudeTest: CrudeTestView | null;
  pooled: { label: string; cell: IntervalCell; alternative: { label: string; cell: IntervalCell } | null } | null;
  tables: CrudeTableRow[];
}

function pText(p: number | null): string {
  const text = formatP(p);
  return text.startsWith('<') ? `p ${text}` : `p = ${text}`;
}

function pooledOf(result: Result, measure: MeasureInfo) {
  const mh = result.stratifiedTables?.mantelHaenszel;
  if (!mh) return null;
  return measure.code === 'OR' ? mh.oddsRatio : measure.code === 'RR' ? mh.riskRatio : measure.code === 'RD' ? mh.riskDifference : null;
}

/** The crude cross-check; null when the result has no stratified tables (continuous modifier or outcome). */
export function crudeCrossCheck(result: Result, measure: MeasureInfo, levels: readonly string[]): CrudeCrossCheckView | null {
  const stratified = result.stratifiedTables;
  if (!stratified) return null;
  const omnibus = result.interaction.omnibus;
  const adjustedTest: CrudeTestView = {
    name: `Adjusted model (${OMNIBUS_LABEL[omnibus.test].toLowerCase()})`,
    text: `${omnibus.test === 'F' ? 'F' : 'χ²'} = ${formatNumber(omnibus.statistic, 'statistic')} on ${omnibus.df} df`,
    p: pCell(omnibus.p, 'crude-check-adjusted-p'),
  };
  const homogeneity = measure.code === 'OR' ? (stratified.homogeneity.breslowDayTarone ?? stratified.homogeneity.breslowDay) : measure.code === 'RR' ? stratified.homogeneity.woolf : null;
  const tradeName = measure.code === 'OR' ? (stratified.homogeneity.breslowDayTarone ? "Breslow-Day, Tarone's correction" : 'Breslow-Day') : 'Woolf';
  const crudeTest: CrudeTestView | null = homogeneity
    ? { name: `Crude tables, no covariates (${tradeName})`, text: `χ² = ${formatNumber(homogeneity.statistic, 'statistic')} on ${homogeneity.df} df`, p: pCell(homogeneity.p, 'crude-check-homogeneity-p') }
    : null;

  const pooledInterval = pooledOf(result, measure);
  const variances = stratified.mantelHaenszel.riskDifferenceVariances ?? [];
  const pooled = pooledInterval
    ? {
        label: `All levels pooled, no covariates (Mantel-Haenszel${measure.code === 'RD' ? `; limits from the ${variances[0]?.label ?? 'Sato (1989) variance'}` : ''})`,
        cell: intervalCell(pooledInterval, measure.kind, 'mh-pooled'),
        alternative: measure.code === 'RD' && variances[1] && pooledInterval.estimate !== null
          ? { label: `With the ${variances[1].label}`, cell: intervalCell({ estimate: pooledInterval.estimate, lower: variances[1].lower, upper: variances[1].upper }, measure.kind, 'mh-pooled-greenland-robins') }
          : null,
      }
    : null;

  const crudeOf = (row: NonNullable<Result['stratifiedTables']>['strata'][number]) =>
    measure.code === 'OR' ? row.oddsRatio : measure.code === 'RR' ? row.riskRatio : measure.code === 'RD' ? row.riskDifference : null;
  const byLevel = new Map(stratified.strata.map((row) => [row.level, row]));
  const tables = levels.flatMap((level) => {
    const row = byLevel.get(level);
    if (!row) return [];
    const crude = crudeOf(row);
    return [{
      level,
      exposedEvents: numberCell(row.a, 'count', `crude-a-${level}`),
      exposedOthers: numberCell(row.b, 'count', `crude-b-${level}`),
      controlEvents: numberCell(row.c, 'count', `crude-c-${level}`),
      controlOthers: numberCell(row.d, 'count', `crude-d-${level}`),
      crude: crude ? intervalCell(crude, measure.kind, `crude-effect-${level}`) : null,
    }];
  });

  return { comparison: comparisonSentence(result, measure, homogeneity?.p ?? null, pooledInterval), adjustedTest, crudeTest, pooled, tables };
}

/** Crude against adjusted: does each find that the effect differs, and how the pooled crude estimate sits beside the adjusted ones. */
function comparisonSentence(result: Result, measure: MeasureInfo, crudeP: number | null, pooled: { estimate: number | null; lower: number | null; upper: number | null } | null): string {
  const alpha = result.alpha;
  const modifier = result.modifier.column;
  const adjustedP = result.interaction.omnibus.p;
  const level = `at the ${percentText(alpha)} % level`;
  const parts: string[] = [];
  if (crudeP !== null && adjustedP !== null) {
    const crude = crudeP < alpha;
    const adjusted = adjustedP < alpha;
    const ps = `(adjusted ${pText(adjustedP)}, crude ${pText(crudeP)})`;
    if (crude && adjusted) parts.push(`The crude tables agree with the adjusted model: both find that the effect differs across ${modifier} ${level} ${ps}.`);
    else if (!crude && !adjusted) parts.push(`The crude tables agree with the adjusted model: neither finds that the effect differs across ${modifier} ${level} ${ps}.`);
    else if (adjusted) parts.push(`The adjusted model finds that the effect differs across ${modifier} ${level}, but the crude tables do not ${ps}: the difference shows only once the covariates are taken into account.`);
    else parts.push(`The crude tables suggest that the effect differs across ${modifier} ${level}, but the adjusted model does not ${ps}: the covariates may explain the crude difference.`);
  }
  const within = result.strata.map((stratum) => stratum.effect.estimate).filter((value): value is number => value !== null);
  if (pooled && pooled.estimate !== null && within.length > 0) {
    const kind = measure.kind;
    parts.push(
      `Pooled over the levels without covariates, the ${measure.name} is ${formatInterval(pooled.estimate, pooled.lower, pooled.upper, kind)}; ` +
        `the adjusted ${measure.name}s within the levels run from ${formatNumber(Math.min(...within), kind)} to ${formatNumber(Math.max(...within), kind)}.`,
    );
  }
  return parts.join(' ');
}
