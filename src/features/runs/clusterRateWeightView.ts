/**
 * What the results page, the CSV and the brief say about the variance in use (its name,
 * the number of clusters), person-time rates (per 1,000 units of the dictionary's unit)
 * with the overdispersion check, and frequency weights — all read from the result's
 * `clustering`, `rates`, `weights` and `model.standardErrors`.
 */
import type { Result } from '@/engine/boundary/schemas';
import { fixed, formatCount } from './resultFormat';

/** The variance behind every interval, in words. */
export function varianceName(result: Pick<Result, 'model' | 'clustering'>): string {
  const kind = result.model.standardErrors;
  if (kind === 'CR1') return result.clustering?.method ?? 'cluster-robust (CR1, Liang and Zeger 1986)';
  if (kind === 'HC0') return 'robust (HC0 sandwich)';
  if (kind === 'HC3') return 'HC3';
  return 'model-based';
}

export interface RateRowView {
  level: string | null;
  exposure: string;
  events: string;
  personTime: string;
  rate: string;
  /** Unrounded rate, for data attributes and the CSV. */
  value: number | null;
}

export interface ClusterRateWeightView {
  /** "Standard errors: cluster-robust (CR1, …); 42 clusters of site (8 to 61 rows)." */
  varianceLine: string;
  clusters: { column: string; count: number; few: boolean } | null;
  weights: string | null;
  rates: { heading: string; unit: string; rows: RateRowView[] } | null;
  overdispersion: { text: string; ratio: number | null; high: boolean } | null;
}

/** The unit of the person-time column as the dictionary gives it, or a neutral word. */
export function personTimeUnit(rates: NonNullable<Result['rates']>): string {
  return rates.unit?.trim() || `units of ${rates.personTimeColumn ?? 'person-time'}`;
}

export function clusterRateWeightView(result: Result): ClusterRateWeightView {
  const clustering = result.clustering ?? null;
  const name = varianceName(result);
  const varianceLine = clustering
    ? `Standard errors: ${name}, ${formatCount(clustering.clusters)} clusters of ${clustering.column} (${formatCount(clustering.smallestCluster)} to ${formatCount(clustering.largestCluster)} rows each); every interval uses this variance.`
    : `Standard errors: ${name}.`;
  const weights = result.weights
    ? `Frequency weights from ${result.weights.column}: ${formatCount(result.weights.rows)} rows stand for ${formatCount(result.weights.units)} units; every count and interval is that of the units.`
    : null;
  const rates = result.rates ?? null;
  let ratesView: ClusterRateWeightView['rates'] = null;
  let overdispersion: ClusterRateWeightView['overdispersion'] = null;
  if (rates) {
    const unit = personTimeUnit(rates);
    if (rates.cells.length > 0) {
      ratesView = {
        heading: `Crude rates per ${formatCount(rates.per)} ${unit}`,
        unit,
        rows: rates.cells.map((cell) => ({
          level: cell.modifier,
          exposure: cell.exposure,
          events: formatCount(cell.events),
          personTime: fixed(cell.personTime, 1),
          rate: fixed(cell.ratePer1000, 2),
          value: cell.ratePer1000,
        })),
      };
    }
    const ratio = rates.overdispersion.ratio;
    overdispersion = {
      ratio,
      high: ratio !== null && ratio > 1.5,
      text:
        `Overdispersion check: Pearson χ² ${fixed(rates.overdispersion.pearsonChiSquare, 1)} on ${formatCount(rates.overdispersion.df)} df, ratio ${fixed(ratio, 2)}` +
        (ratio !== null && ratio > 1.5
          ? result.model.standardErrors === 'model'
            ? ' — the counts vary more than the Poisson model allows; use robust or cluster-robust standard errors.'
            : ` — above 1.5, covered by the ${varianceName(result)} standard errors.`
          : ' (near 1 is what the Poisson model expects).'),
    };
  }
  return {
    varianceLine,
    clusters: clustering ? { column: clustering.column, count: clustering.clusters, few: clustering.clusters < 30 } : null,
    weights,
    rates: ratesView,
    overdispersion,
  };
}
