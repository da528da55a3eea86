/**
 * Small-cell suppression for briefs (CMS cell size suppression policy; standards.md): no
 * count from 1 to threshold − 1 is published, zero may be, and no suppressed count can be
 * derived from the totals, the other cells or percentages that are published.
 *
 * The counts of a brief are cells linked by additive relations (a total equals the sum of
 * its parts). Some cells are printed (people in a stratum and arm, events); others are
 * never printed but follow from those that are (people without the event = people −
 * events). The plan:
 *
 * 1. Primary suppression: every printed count in 1..threshold − 1.
 * 2. Complementary suppression, repeated until nothing changes: solve the linear system of
 *    the relations for the unpublished cells; while some small count (printed or not) is
 *    determined by what is published, withhold the published cell, or pair of published
 *    cells of one relation, that leaves the fewest small counts determined, and of those
 *    the one hiding the least (the smallest sum of counts).
 *
 * The determination test is exact linear algebra: an unknown is determined exactly when
 * every solution of the homogeneous system is zero at it (Gauss-Jordan elimination to
 * reduced row echelon form; a pivot unknown whose row has no free unknowns is fixed).
 * Percentages of a cell are published only when both its numerator and denominator are.
 */

/** One count. `shown` is false for counts the brief never prints but that follow from printed ones. */
export interface CountCell {
  id: string;
  value: number;
  shown: boolean;
}

/** total = sum(parts). */
export interface Relation {
  total: string;
  parts: readonly string[];
}

export interface SuppressionPlan {
  threshold: number;
  /** Printed cells that are withheld: primary (small) and complementary. */
  suppressed: ReadonlySet<string>;
  /** The printed cells withheld because they are small themselves. */
  primary: ReadonlySet<string>;
}

/** A count the policy forbids publishing: 1 to threshold − 1. */
export function isSmallCount(value: number, threshold: number): boolean {
  return value >= 1 && value < threshold;
}

/** The text of a small count, e.g. "<11". */
export function smallCountText(threshold: number): string {
  return `<${threshold}`;
}

/** The text of a count withheld only to protect another one. */
export const WITHHELD_TEXT = 'withheld';

const TOLERANCE = 1e-9;

/**
 * The unpublished cells whose value follows from the published ones through the
 * relations (ignoring the bounds that counts are whole and not negative).
 */
export function determinedCells(cells: readonly CountCell[], relations: readonly Relation[], published: ReadonlySet<string>): Set<string> {
  const { unknowns, reduced, pivotOf } = reduce(cells, relations, published);
  const determined = new Set<string>();
  unknowns.forEach((id, column) => {
    const row = pivotOf.get(column);
    if (row === undefined) return;
    const free = reduced[row].some((value, other) => other !== column && !pivotOf.has(other) && Math.abs(value) > TOLERANCE);
    if (!free) determined.add(id);
  });
  return determined;
}

/**
 * For an unpublished cell that is not determined: the range its value can take along one
 * solution of the homogeneous system while every unpublished count stays at or above zero
 * (a lower bound of its full range). Null when the cell is determined. Used by the tests'
 * solver-style check.
 */
export function feasibleRange(
  cells: readonly CountCell[], relations: readonly Relation[], published: ReadonlySet<string>, id: string,
): { low: number; high: number } | null {
  const { unknowns, reduced, pivotOf } = reduce(cells, relations, published);
  const target = unknowns.indexOf(id);
  if (target === -1) return null;
  const value = new Map(cells.map((cell) => [cell.id, cell.value]));
  // A null-space direction with a non-zero entry at the target.
  const freeColumns = unknowns.map((_, column) => column).filter((column) => !pivotOf.has(column));
  const pivotRow = pivotOf.get(target);
  const free = pivotRow === undefined ? target : freeColumns.find((column) => Math.abs(reduced[pivotRow][column]) > TOLERANCE);
  if (free === undefined) return null;
  const direction = unknowns.map((_, column) => {
    if (column === free) return 1;
    const row = pivotOf.get(column);
    return row === undefined ? 0 : -reduced[row][free];
  });
  let low = -Infinity;
  let high = Infinity;
  direction.forEach((step, column) => {
    if (Math.abs(step) <= TOLERANCE) return;
    const limit = -(value.get(unknowns[column]) ?? 0) / step; // where this count reaches zero
    if (step > 0) low = Math.max(low, limit);
    else high = Math.min(high, limit);
  });
  const current = value.get(id) ?? 0;
  const ends = [current + low * direction[target], current + high * direction[target]];
  return { low: Math.min(...ends), high: Math.max(...ends) };
}

/** Plans primary and complementary suppression for the printed cells. */
export function planSuppression(cells: readonly CountCell[], relations: readonly Relation[], threshold: number): SuppressionPlan {
  if (!Number.isInteger(threshold) || threshold < 2) throw new Error('The suppression threshold must be a whole number of at least 2.');
  const byId = new Map(cells.map((cell) => [cell.id, cell]));
  for (const relation of relations) {
    for (const id of [relation.total, ...relation.parts]) if (!byId.has(id)) throw new Error(`The relation names an unknown cell: ${id}.`);
  }
  const primary = new Set(cells.filter((cell) => cell.shown && isSmallCount(cell.value, threshold)).map((cell) => cell.id));
  const suppressed = new Set(primary);
  const published = () => new Set(cells.filter((cell) => cell.shown && !suppressed.has(cell.id)).map((cell) => cell.id));
  const small = cells.filter((cell) => isSmallCount(cell.value, threshold)).map((cell) => cell.id);

  const exposedOf = (open: ReadonlySet<string>) => {
    const determined = determinedCells(cells, relations, open);
    return small.filter((id) => determined.has(id));
  };
  const exposedCount = (open: ReadonlySet<string>) => exposedOf(open).length;
  const valueOf = (id: string) => byId.get(id)?.value ?? 0;
  for (;;) {
    const open = published();
    const exposed = exposedCount(open);
    if (exposed === 0) break;
    const candidates = [...open].sort((a, b) => valueOf(a) - valueOf(b) || a.localeCompare(b));
    const without = (...ids: string[]) => new Set([...open].filter((id) => !ids.includes(id)));
    // The cell or pair that protects most, hiding the least.
    let choice: string[] | null = null;
    let best = exposed;
    let bestCost = Infinity;
    const consider = (ids: string[]) => {
      const left = exposedCount(without(...ids));
      const cost = ids.reduce((sum, id) => sum + valueOf(id), 0);
      if (left < best || (left === best && choice !== null && cost < bestCost)) { best = left; bestCost = cost; choice = ids; }
    };
    for (const id of candidates) consider([id]);
    // Pairs of published cells in one relation: hiding a cell that its siblings give back
    // is useless alone, so those pairs are where one more cell helps.
    const seen = new Set<string>();
    for (const relation of relations) {
      const members = [relation.total, ...relation.parts].filter((id) => open.has(id));
      for (let i = 0; i < members.length; i += 1) {
        for (let j = i + 1; j < members.length; j += 1) {
          const key = [members[i], members[j]].sort().join('|');
          if (seen.has(key)) continue;
          seen.add(key);
          consider([members[i], members[j]]);
        }
      }
    }
    const next = choice ?? candidates.slice(0, 1);
    if (next.length === 0) throw new Error('Suppression cannot protect a small count.');
    for (const id of next) suppressed.add(id);
  }
  return { threshold, suppressed, primary };
}

/** Gauss-Jordan elimination of the relations over the unpublished cells. */
function reduce(cells: readonly CountCell[], relations: readonly Relation[], published: ReadonlySet<string>) {
  const unknowns = cells.map((cell) => cell.id).filter((id) => !published.has(id));
  const column = new Map(unknowns.map((id, index) => [id, index]));
  // Each relation as coefficients over the unknowns: total − Σ parts = 0; published values
  // only move the right-hand side, which does not matter for determination.
  const reduced: number[][] = relations.map((relation) => {
    const row = Array<number>(unknowns.length).fill(0);
    const add = (id: string, coefficient: number) => {
      const index = column.get(id);
      if (index !== undefined) row[index] += coefficient;
    };
    add(relation.total, 1);
    for (const part of relation.parts) add(part, -1);
    return row;
  });
  const pivotOf = new Map<number, number>();
  let rank = 0;
  for (let col = 0; col < unknowns.length && rank < reduced.length; col += 1) {
    let best = rank;
    for (let row = rank + 1; row < reduced.length; row += 1) if (Math.abs(reduced[row][col]) > Math.abs(reduced[best][col])) best = row;
    if (Math.abs(reduced[best][col]) <= TOLERANCE) continue;
    [reduced[rank], reduced[best]] = [reduced[best], reduced[rank]];
    const pivot = reduced[rank][col];
    reduced[rank] = reduced[rank].map((value) => value / pivot);
    for (let row = 0; row < reduced.length; row += 1) {
      if (row === rank) continue;
      const factor = reduced[row][col];
      if (Math.abs(factor) <= TOLERANCE) continue;
      reduced[row] = reduced[row].map((value, index) => value - factor * reduced[rank][index]);
    }
    pivotOf.set(col, rank);
    rank += 1;
  }
  return { unknowns, reduced, pivotOf };
}
