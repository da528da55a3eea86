import { z } from 'zod';

/**
 * The result's standardized absolute effects and E-values (kept apart from schemas.ts,
 * which imports them). The small parts are the same shapes as schemas.ts's.
 */

const num = z.number().nullable();
const effectInterval = z.strictObject({ estimate: num, lower: num, upper: num, se: num, p: num });

// Standardized absolute effects (binary outcomes) and E-values: methods.md, "Rates, doses,
// absolute effects".
export const standardizedRisk = z.strictObject({ estimate: num, lower: num, upper: num, se: num });
const numberNeededEnd = z.strictObject({
  value: num.describe('1/|limit of the risk difference|.'),
  direction: z.enum(['treat', 'harm']).nullable().describe('treat: that limit has fewer events with the intervention; harm: more; null at 0.'),
});
export const numberNeeded = z.strictObject({
  estimate: num.describe('1/|RD|; null when RD is 0.'),
  direction: z.enum(['treat', 'harm']).nullable().describe('treat: fewer events with the intervention (one fewer per NNT treated); harm: one more per NNT treated.'),
  throughInfinity: z.boolean().describe('The RD interval includes 0, so the NNT interval runs from the lower end through infinity to the upper end (Altman, BMJ 1998).'),
  lower: numberNeededEnd.describe('The end that comes from the lower limit of the risk difference.'),
  upper: numberNeededEnd.describe('The end that comes from the upper limit of the risk difference.'),
});
export const standardizedLevel = z.strictObject({
  level: z.string(),
  n: z.number(),
  riskUnexposed: standardizedRisk.describe('Mean predicted risk over the level\'s rows with the intervention set to the reference arm.'),
  riskExposed: standardizedRisk.describe('The same with the intervention set to the other arm.'),
  riskDifference: effectInterval,
  nnt: numberNeeded,
  interactionContrast: effectInterval.nullable().describe('RD of this level minus RD of the reference level; null for the reference level.'),
});
export const standardizedEffects = z.strictObject({
  method: z.literal('standardized-delta'),
  variance: z.string().describe('The coefficient covariance the delta-method intervals use (the fit\'s own: model, HC0, HC3, ...).'),
  reference: z.string().describe('The reference modifier level of the interaction contrasts.'),
  levels: z.array(standardizedLevel),
});
export const eValueEntry = z.strictObject({
  level: z.string(),
  ratio: z.enum(['risk ratio', 'odds ratio', 'rate ratio']),
  conversion: z.enum(['none', 'square-root', 'rare-outcome']).describe('Odds ratios: square root when the outcome is common (over 15 %), else read as a risk ratio.'),
  prevalence: num.describe('Outcome proportion among the level\'s analysed rows, used to judge whether the outcome is common (odds ratios).'),
  estimate: num.describe('E-value of the point estimate.'),
  limit: num.describe('E-value of the interval limit nearer 1; 1 when the interval includes 1.'),
});
export const eValues = z.strictObject({
  commonAbove: z.number().describe('Outcome proportion above which an odds ratio is square-rooted.'),
  prevalenceBasis: z.literal('stratum').describe('The proportion is that of each modifier level (both arms).'),
  entries: z.array(eValueEntry),
});

export type StandardizedRisk = z.output<typeof standardizedRisk>;
export type NumberNeeded = z.output<typeof numberNeeded>;
export type StandardizedLevel = z.output<typeof standardizedLevel>;
export type StandardizedEffects = z.output<typeof standardizedEffects>;
export type EValueEntry = z.output<typeof eValueEntry>;
export type EValues = z.output<typeof eValues>;
