import { z } from 'zod';

/**
 * The result's blocks for a continuous intervention (dose slopes), an ordered modifier's
 * test for trend, and the predictions behind the profile plot (kept apart from schemas.ts,
 * which imports them). The small parts are the same shapes as schemas.ts's.
 */

const num = z.number().nullable();
const interval = z.strictObject({ estimate: num, lower: num, upper: num });
const test = z.strictObject({ statistic: num, df: z.number(), p: num });

const slopeByLevel = z.strictObject({ level: z.string(), estimate: num, se: num, lower: num, upper: num, p: num });

export const doseBlock = z.strictObject({
  scale: z.enum(['log-odds', 'log-risk', 'identity']).describe('Scale of the slopes: the model\'s linear predictor per unit of the intervention.'),
  slopes: z.array(slopeByLevel).describe('Slope of the intervention within each level: b_A + b_{A·m}, Var = V_AA + 2V_{A,Am} + V_{Am,Am}.'),
  differences: z.array(slopeByLevel).describe('Each level\'s slope minus the reference level\'s slope: b_{A·m}.'),
  interval: z.enum(['z', 't']).describe('Wald intervals from the normal (GLMs) or t (linear) distribution.'),
});

export const trendBlock = z.strictObject({
  scores: z.array(z.strictObject({ level: z.string(), score: z.number() })).describe('The scores used, by level.'),
  term: z.string().describe('The one product term of the intervention with the level scores.'),
  estimate: num.describe('Product coefficient on the linear-predictor scale: change in the intervention\'s effect per unit of score.'),
  se: num,
  lower: num,
  upper: num,
  ratio: interval.nullable().describe('Ratio models: the coefficient and limits exponentiated (ratio of ratios per unit of score).'),
  wald: test.describe('Wald test of the product coefficient (z² on 1 df, or t² as F on 1 and the residual df for linear models).'),
  likelihoodRatio: test.nullable().describe('GLMs: likelihood-ratio test of the trend model against the model without product terms.'),
});

const predictionPoint = z.strictObject({
  level: z.string().nullable().describe('Categorical modifier: the level.'),
  x: num.describe('Continuous modifier: the value.'),
  linearPredictor: num,
  se: num.describe('Standard error of the linear predictor.'),
  estimate: num.describe('On the outcome scale (risk or mean).'),
  lower: num,
  upper: num,
});

export const predictionsBlock = z.strictObject({
  method: z.literal('typical-values').describe('Covariates held at their means (continuous) and most common levels (categorical).'),
  covariates: z.array(
    z.strictObject({ column: z.string(), held: z.enum(['mean', 'most-common']), value: num, level: z.string().nullable() }),
  ),
  lines: z.array(
    z.strictObject({ label: z.string(), exposure: z.number().describe('Value of the intervention term on this line.'), points: z.array(predictionPoint) }),
  ),
});

export type DoseBlock = z.output<typeof doseBlock>;
export type TrendBlock = z.output<typeof trendBlock>;
export type PredictionsBlock = z.output<typeof predictionsBlock>;
