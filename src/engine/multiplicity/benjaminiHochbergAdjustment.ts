/**
 * Benjamini-Hochberg adjusted p-values controlling the false discovery rate (Benjamini
 * and Hochberg, J R Statist Soc B 1995;57:289-300).
 *
 * Formula: with p(1) ≤ … ≤ p(m), adjusted p(i) = min_{j ≥ i} min(1, m·p(j)/j). Matches
 * R's p.adjust(p, "BH"). Null entries are ignored (and stay null).
 *
 * @example benjaminiHochbergAdjustment([0.01, 0.04, 0.03]) // [0.03, 0.04, 0.04]
 */
export function benjaminiHochbergAdjustment(pValues: readonly (number | null)[]): (number | null)[] {
  const indexed = pValues.map((p, index) => ({ p, index })).filter((entry): entry is { p: number; index: number } => entry.p !== null);
  const m = indexed.length;
  indexed.sort((a, b) => a.p - b.p || a.index - b.index);
  const adjusted: (number | null)[] = pValues.map(() => null);
  let running = 1;
  for (let rank = m - 1; rank >= 0; rank--) {
    running = Math.min(running, (m * indexed[rank].p) / (rank + 1));
    adjusted[indexed[rank].index] = Math.min(1, running);
  }
  return adjusted;
}
