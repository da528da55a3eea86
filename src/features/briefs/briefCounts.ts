/**
 * The counts a brief prints, as cells and relations for the suppression plan
 * (suppression.ts), built from the engine result alone:
 *
 * - per modifier stratum and intervention arm: people `n:s:a`, events `e:s:a`, and the
 *   people without the event `f:s:a` (never printed, but n − e);
 * - per stratum: people `n:s` and events `e:s` (the within-stratum columns);
 * - overall: people analysed `n`, events `e` and without the event `f` (not printed);
 * - rows left out for missing values `dropped` (its own count; the extract's size is not
 *   part of a brief).
 */
import type { Result } from '@/engine/boundary/schemas';
import { formatCount } from '../runs/resultFormat';
import { planSuppression, smallCountText, WITHHELD_TEXT, type CountCell, type Relation, type SuppressionPlan } from './suppression';

export interface BriefCounts {
  cells: CountCell[];
  relations: Relation[];
  plan: SuppressionPlan;
}

export const cellId = {
  arm: (measure: 'n' | 'e' | 'f', level: string, arm: string) => `${measure}:${level}:${arm}`,
  stratum: (measure: 'n' | 'e', level: string) => `${measure}:${level}`,
};

/** The cells, relations and suppression plan of a result's printed counts. */
export function briefCounts(result: Result, threshold: number): BriefCounts {
  const binary = result.outcome.type === 'binary';
  const cells: CountCell[] = [];
  const relations: Relation[] = [];
  const add = (id: string, value: number, shown: boolean) => cells.push({ id, value, shown });
  const arms = [result.exposure.reference, result.exposure.level];
  const stratumIds: string[] = [];
  const stratumEventIds: string[] = [];

  if (result.modifier.type === 'categorical' && result.joint) {
    for (const stratum of result.strata) {
      const level = stratum.level;
      const armCells = arms.map((arm) => result.joint?.cells.find((cell) => cell.modifier === level && cell.exposure === arm));
      armCells.forEach((cell, index) => {
        const arm = arms[index];
        add(cellId.arm('n', level, arm), cell?.n ?? 0, true);
        if (binary) {
          const events = cell?.events ?? 0;
          add(cellId.arm('e', level, arm), events, true);
          add(cellId.arm('f', level, arm), (cell?.n ?? 0) - events, false);
          relations.push({ total: cellId.arm('n', level, arm), parts: [cellId.arm('e', level, arm), cellId.arm('f', level, arm)] });
        }
      });
      add(cellId.stratum('n', level), stratum.n, true);
      relations.push({ total: cellId.stratum('n', level), parts: arms.map((arm) => cellId.arm('n', level, arm)) });
      stratumIds.push(cellId.stratum('n', level));
      if (binary) {
        add(cellId.stratum('e', level), stratum.events ?? 0, true);
        relations.push({ total: cellId.stratum('e', level), parts: arms.map((arm) => cellId.arm('e', level, arm)) });
        stratumEventIds.push(cellId.stratum('e', level));
      }
    }
  }
  add('n', result.n, true);
  if (stratumIds.length > 0) relations.push({ total: 'n', parts: stratumIds });
  if (binary) {
    const events = result.outcome.events ?? 0;
    add('e', events, true);
    add('f', result.n - events, false);
    relations.push({ total: 'n', parts: ['e', 'f'] });
    if (stratumEventIds.length > 0) relations.push({ total: 'e', parts: stratumEventIds });
  }
  add('dropped', result.dropped, true);
  return { cells, relations, plan: planSuppression(cells, relations, threshold) };
}

/** The printed text of a count: the number, "<threshold" for a small one, "withheld" for a complementary one. */
export function countText(counts: BriefCounts, id: string): string {
  const cell = counts.cells.find((entry) => entry.id === id);
  if (!cell) return '—';
  if (counts.plan.primary.has(id)) return smallCountText(counts.plan.threshold);
  if (counts.plan.suppressed.has(id)) return WITHHELD_TEXT;
  return formatCount(cell.value);
}

/** Whether a printed count is published as its number. */
export function isPublished(counts: BriefCounts, id: string): boolean {
  return counts.cells.some((cell) => cell.id === id && cell.shown) && !counts.plan.suppressed.has(id);
}

/** A stratum is small when any count in it (printed or not) is in 1..threshold − 1. */
export function isSmallStratum(counts: BriefCounts, level: string): boolean {
  return counts.cells.some((cell) => (cell.id === `n:${level}` || cell.id === `e:${level}` || cell.id.startsWith(`n:${level}:`) || cell.id.startsWith(`e:${level}:`) || cell.id.startsWith(`f:${level}:`))
    && cell.value >= 1 && cell.value < counts.plan.threshold);
}
