/**
 * Reading aids of the results page, built from the tables alone: the line above the
 * joint-effects table that says which figure answers the question, the heading of the
 * interaction table by the scales the model has, and the intervals too wide to read.
 */
import type { IntervalCell } from './resultFormat';
import { formatNumber, formatP } from './resultFormat';
import type { ResultTables } from './resultTables';

/** Crossgrain's line for an unstable interval: a ratio-scale interval whose upper limit is at least this many times its lower. */
export const UNSTABLE_RATIO = 10;

export interface UnstableInterval {
  testId: string;
  text: string;
}

function capital(text: string): string {
  return text.charAt(0).toUpperCase() + text.slice(1);
}

/** The figure that answers "does the effect differ?", and where to read it, in one line. */
export function jointReadingLine(tables: ResultTables): string | null {
  if (!tables.joint) return null;
  const { measure, exposure, modifier } = tables;
  const within = tables.joint.rows.filter((row) => row.within.effect.estimate !== null);
  if (within.length === 0) return null;
  const sorted = [...within].sort((a, b) => (a.within.effect.estimate as number) - (b.within.effect.estimate as number));
  const low = sorted[0];
  const high = sorted[sorted.length - 1];
  const p = formatP(tables.omnibus.p.value);
  return (
    `The highlighted column answers the question: the ${measure.name} of ${exposure.column} = ${exposure.level} against ${exposure.reference} within each level of ${modifier.column}, ` +
    `from ${formatNumber(low.within.effect.estimate, measure.kind)} (${low.level}) to ${formatNumber(high.within.effect.estimate, measure.kind)} (${high.level}). ` +
    `Whether that spread is more than chance is the interaction test below (p ${p.startsWith('<') ? p : `= ${p}`}); the other columns set each combination against one reference.`
  );
}

/** The interaction table's heading: two scales for ratio models, one for linear models. */
export function interactionHeading(tables: ResultTables): string {
  if (!tables.measure.ratio) return `Does the effect differ? The ${tables.measure.interactionName}`;
  const additive = tables.interaction.some((row) => row.reri !== null);
  const multiplicative = tables.interaction.some((row) => row.multiplicative !== null);
  if (additive && multiplicative) return 'Does the effect differ? Interaction on the additive and multiplicative scales';
  if (additive) return 'Does the effect differ? Interaction on the additive scale';
  if (multiplicative) return 'Does the effect differ? Interaction on the multiplicative scale';
  return `Does the effect differ? The ${tables.measure.interactionName}`;
}

/** Ratio-scale intervals on the page whose upper limit is at least UNSTABLE_RATIO times the lower, in words. */
export function unstableIntervals(tables: ResultTables): UnstableInterval[] {
  const found: UnstableInterval[] = [];
  const check = (cell: IntervalCell | null | undefined, what: string) => {
    if (!cell?.testId || cell.lower === null || cell.upper === null || !(cell.lower > 0)) return;
    const times = cell.upper / cell.lower;
    if (!(times >= UNSTABLE_RATIO)) return;
    found.push({
      testId: cell.testId,
      text: `${capital(what)}: ${formatNumber(cell.lower, 'ratio')} to ${formatNumber(cell.upper, 'ratio')}, an upper limit ${times >= 100 ? Math.round(times).toLocaleString('en-GB') : times.toFixed(0)} times the lower.`,
    });
  };
  const ratio = tables.measure.ratio;
  for (const row of tables.joint?.rows ?? []) {
    if (ratio) check(row.within.effect, `the ${tables.measure.name} within ${row.level}`);
  }
  for (const row of tables.interaction) {
    check(row.s, `the synergy index S for ${row.level}`);
    check(row.multiplicative, `the ${tables.measure.interactionName} for ${row.level}`);
  }
  if (ratio) for (const row of tables.continuous?.slopes ?? []) check(row.effect, `the ${tables.measure.name} at ${row.label}`);
  return found;
}
