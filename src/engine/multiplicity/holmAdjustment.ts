/**
 * Holm's step-down adjusted p-values (Holm, Scand J Statist 1979;6:65-70).
 *
 * Formula: with p(1) ≤ … ≤ p(m), adjusted p(i) = max_{j ≤ i} min(1, (m − j + 1)·p(j)).
 * Matches R's p.adjust(p, "holm"). Null entries are ignored (and stay null); m counts the
 * others.
 *
 * @example holmAdjustment([0.01, 0.04, 0.03]) // [0.03, 0.06, 0.06]
 */
export function holmAdjustment(pValues: readonly (number | null)[]): (number | null)[] {
  const indexed = pValues.map((p, index) => ({ p, index })).filter((entry): entry is { p: number; index: number } => entry.p !== null);
  const m = indexed.length;
  indexed.sort((a, b) => a.p - b.p || a.index - b.index);
  const adjusted: (number | null)[] = pValues.map(() => null);
  let running = 0;
  indexed.forEach((entry, rank) => {
    running = Math.max(running, Math.min(1, (m - rank) * entry.p));
    adjusted[entry.index] = running;
  });
  return adjusted;
}
