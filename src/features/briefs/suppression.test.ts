/**
 * Small-cell suppression (CMS cell size suppression policy, as restated in the shared
 * design's standards.md): no published count in 1..threshold − 1, zero allowed, and no
 * suppressed count recoverable from the published margins. The tables below are invented
 * for the test; what is expected follows from the policy, not from a reference program.
 */
import { describe, expect, it } from 'vitest';
import { determinedCells, feasibleRange, isSmallCount, planSuppression, type CountCell, type Relation } from './suppression';

/** A two-way table with row, column and grand totals, all printed. */
function twoWay(values: number[][]): { cells: CountCell[]; relations: Relation[] } {
  const cells: CountCell[] = [];
  const relations: Relation[] = [];
  values.forEach((row, r) => {
    row.forEach((value, c) => cells.push({ id: `c${r}${c}`, value, shown: true }));
    cells.push({ id: `r${r}`, value: row.reduce((a, b) => a + b, 0), shown: true });
    relations.push({ total: `r${r}`, parts: row.map((_, c) => `c${r}${c}`) });
  });
  values[0].forEach((_, c) => {
    cells.push({ id: `k${c}`, value: values.reduce((a, row) => a + row[c], 0), shown: true });
    relations.push({ total: `k${c}`, parts: values.map((_, r) => `c${r}${c}`) });
  });
  cells.push({ id: 'all', value: values.flat().reduce((a, b) => a + b, 0), shown: true });
  relations.push({ total: 'all', parts: values.map((_, r) => `r${r}`) });
  return { cells, relations };
}

/** The solver-style check: every small count is undetermined by what is published, over a range of at least one unit. */
function expectProtected(cells: CountCell[], relations: Relation[], suppressed: ReadonlySet<string>, threshold: number) {
  const published = new Set(cells.filter((cell) => cell.shown && !suppressed.has(cell.id)).map((cell) => cell.id));
  for (const cell of cells) {
    if (published.has(cell.id)) expect(cell.value === 0 || cell.value >= threshold, `${cell.id} = ${cell.value} is published`).toBe(true);
  }
  const determined = determinedCells(cells, relations, published);
  for (const cell of cells.filter((entry) => isSmallCount(entry.value, threshold))) {
    expect(determined.has(cell.id), `${cell.id} can be recovered`).toBe(false);
    const range = feasibleRange(cells, relations, published, cell.id);
    expect(range, cell.id).not.toBeNull();
    expect(range!.high - range!.low, cell.id).toBeGreaterThanOrEqual(1);
    expect(range!.low).toBeLessThanOrEqual(cell.value);
    expect(range!.high).toBeGreaterThanOrEqual(cell.value);
  }
}

describe('small counts', () => {
  it('treats 1 to threshold − 1 as small and 0 and the threshold as publishable', () => {
    // The policy itself: "no cell of 1 to 10 shown, zero allowed" at the default 11.
    expect([0, 1, 10, 11].map((value) => isSmallCount(value, 11))).toEqual([false, true, true, false]);
  });
});

describe('planSuppression', () => {
  it('publishes every count of a table without small cells', () => {
    const { cells, relations } = twoWay([[40, 50], [60, 70]]);
    expect(planSuppression(cells, relations, 11).suppressed.size).toBe(0);
  });

  it('adds complementary suppression so a small cell cannot be recovered from the margins', () => {
    const { cells, relations } = twoWay([[5, 50, 42], [60, 70, 33], [25, 18, 90]]);
    const plan = planSuppression(cells, relations, 11);
    expect(plan.primary).toEqual(new Set(['c00']));
    // One suppressed cell alone would be its row total minus the rest.
    expect(plan.suppressed.size).toBeGreaterThanOrEqual(4);
    expectProtected(cells, relations, plan.suppressed, 11);
  });

  it('protects a small count that is never printed but follows from printed ones (people without the event)', () => {
    const cells: CountCell[] = [{ id: 'n', value: 40, shown: true }, { id: 'e', value: 35, shown: true }, { id: 'f', value: 5, shown: false }];
    const relations: Relation[] = [{ total: 'n', parts: ['e', 'f'] }];
    const plan = planSuppression(cells, relations, 11);
    expect(plan.suppressed.size).toBe(1);
    expectProtected(cells, relations, plan.suppressed, 11);
  });

  it('protects several small cells in one row and a small row total, at another threshold', () => {
    const { cells, relations } = twoWay([[3, 4, 0], [30, 40, 25], [31, 45, 27]]);
    const plan = planSuppression(cells, relations, 20);
    expect(plan.primary.has('r0')).toBe(true);
    expectProtected(cells, relations, plan.suppressed, 20);
  });

  it('protects a brief-shaped table of 12 strata × 2 arms with events, stratum totals and a grand total', () => {
    // The shape briefCounts builds: n = e + f per cell (f never printed), stratum totals of
    // people and events, and the overall totals; invented counts with several small ones.
    const cells: CountCell[] = [];
    const relations: Relation[] = [];
    let people = 0;
    let events = 0;
    for (let s = 0; s < 12; s += 1) {
      const n = [s % 4 === 0 ? 6 : 100 + s * 7, 90 + s * 3];
      const e = [Math.min(s % 3 === 0 ? 4 : 20 + s, n[0] - 2), s === 7 ? 105 : 15 + s];
      for (let a = 0; a < 2; a += 1) {
        cells.push({ id: `n${s}.${a}`, value: n[a], shown: true }, { id: `e${s}.${a}`, value: e[a], shown: true }, { id: `f${s}.${a}`, value: n[a] - e[a], shown: false });
        relations.push({ total: `n${s}.${a}`, parts: [`e${s}.${a}`, `f${s}.${a}`] });
      }
      cells.push({ id: `n${s}`, value: n[0] + n[1], shown: true }, { id: `e${s}`, value: e[0] + e[1], shown: true });
      relations.push({ total: `n${s}`, parts: [`n${s}.0`, `n${s}.1`] }, { total: `e${s}`, parts: [`e${s}.0`, `e${s}.1`] });
      people += n[0] + n[1];
      events += e[0] + e[1];
    }
    cells.push({ id: 'n', value: people, shown: true }, { id: 'e', value: events, shown: true }, { id: 'f', value: people - events, shown: false });
    relations.push({ total: 'n', parts: Array.from({ length: 12 }, (_, s) => `n${s}`) }, { total: 'e', parts: Array.from({ length: 12 }, (_, s) => `e${s}`) }, { total: 'n', parts: ['e', 'f'] });
    const plan = planSuppression(cells, relations, 11);
    expectProtected(cells, relations, plan.suppressed, 11);
    // The grand total stays published: the plan prefers hiding small counts.
    expect(plan.suppressed.has('n')).toBe(false);
  });

  it('can be shown to fail: the check catches a table with one suppressed cell per row', () => {
    const { cells, relations } = twoWay([[5, 50], [60, 70]]);
    expect(() => expectProtected(cells, relations, new Set(['c00']), 11)).toThrow();
  });

  it('refuses a threshold below 2', () => {
    expect(() => planSuppression([], [], 1)).toThrow(/at least 2/);
  });
});
