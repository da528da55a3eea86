import { z } from 'zod';

/**
 * The parts of the specification and result for clustered rows, person-time rates and
 * frequency weights (kept apart from schemas.ts, which imports them).
 */

const column = z.string().min(1);
const num = z.number().nullable();

export const clusterSpec = z.object({ column });
export const weightsSpec = z.object({ column });

export const clusteringBlock = z.strictObject({
  column: z.string(),
  method: z.string().describe('Name of the variance, e.g. "cluster-robust (CR1, Liang and Zeger 1986)".'),
  clusters: z.number().int().describe('Number of clusters among the analysed rows.'),
  smallestCluster: z.number().describe('Rows (units, with weights) in the smallest cluster.'),
  largestCluster: z.number().describe('Rows (units, with weights) in the largest cluster.'),
});

const rateCell = z.strictObject({
  exposure: z.string(),
  modifier: z.string().nullable().describe('Modifier level; null for a continuous modifier (by intervention arm only).'),
  events: z.number(),
  personTime: z.number(),
  ratePer1000: num,
});

export const ratesBlock = z.strictObject({
  personTimeColumn: z.string().nullable().describe('The person-time column (offset log person-time); null for counts without person-time.'),
  unit: z.string().nullable().describe('Unit of the person-time column from the data dictionary; null when the dictionary gives none.'),
  per: z.number().describe('Rates are per this many person-time units (1,000).'),
  cells: z.array(rateCell).describe('Crude rates: events / person-time × 1,000 per intervention arm (and modifier level).'),
  overdispersion: z.strictObject({
    pearsonChiSquare: num,
    df: z.number(),
    ratio: num.describe('Pearson χ² / (n − p); well above 1 suggests overdispersion.'),
  }),
});

export const weightsBlock = z.strictObject({
  column: z.string(),
  rows: z.number().int().describe('Rows of the extract with a weight, before complete cases.'),
  units: z.number().int().describe('Units those rows stand for (the sum of the weights).'),
});

export type ClusteringBlock = z.output<typeof clusteringBlock>;
export type RatesBlock = z.output<typeof ratesBlock>;
export type WeightsBlock = z.output<typeof weightsBlock>;
