import { z } from 'zod';
import { clusteringBlock, clusterSpec, ratesBlock, weightsBlock, weightsSpec } from './clusterRateWeightSchemas.js';
import { screenBlockSchema, screenModifiers } from './screenSchemas.js';
import { eValues, standardizedEffects } from './absoluteEffectSchemas.js';
import { doseBlock, predictionsBlock, trendBlock } from './doseTrendSchemas.js';

/**
 * The engine's specification and result, defined once: these zod schemas are what the API
 * validates and serves and what a run stores, and their inferred types are the engine's
 * own (src/engine/types.ts re-exports them; the engine core imports boundary/ for types
 * only, so zod stays out of it: src/engine/importRule.test.ts). result.schema.json and
 * spec.schema.json are generated from them (npm run -s engine -- --write-schemas).
 */

const levelName = z.string().min(1);
const columnName = z.string().min(1);
const outcomeType = z.enum(['binary', 'continuous', 'count']);
const variableType = z.enum(['categorical', 'continuous']);
const exposureType = z.enum(['binary', 'continuous']);
const modelFamily = z.enum(['logistic', 'modified-poisson', 'log-binomial', 'linear', 'poisson']);
const ciMethod = z.enum(['delta', 'mover', 'bootstrap']);
const effectMeasure = z.enum(['OR', 'RR', 'RD', 'MD']);
const multiplicity = z.enum(['none', 'holm', 'bh']);
const slopePoints = z.discriminatedUnion('kind', [
  z.object({ kind: z.literal('sd') }),
  z.object({ kind: z.literal('percentiles'), percentiles: z.array(z.number().min(0).max(100)).min(1).max(20) }),
  z
    .object({
      kind: z.literal('values'),
      values: z.array(z.number()).min(1).max(20),
      names: z
        .array(z.string().trim().max(40))
        .max(20)
        .optional()
        .describe('Names clinicians give these values, in the same order ("" for none), e.g. "mild", "moderate", "severe".'),
    })
    .refine((points) => !points.names || points.names.length === points.values.length, { message: 'Give one name per value (an empty name for none).', path: ['names'] }),
]);

// ---------------------------------------------------------------------------------------
// Specification
// ---------------------------------------------------------------------------------------

export const SpecSchema = z
  .object({
    outcome: z.object({
      column: columnName,
      type: outcomeType,
      event: levelName.optional().describe('Extra: the level counted as the event when a binary outcome is categorical.'),
      personTime: columnName.optional().describe('Extra (count outcome, poisson model): person-time column; its log is the offset, so effects are rate ratios.'),
    }),
    exposure: z.object({
      column: columnName,
      type: exposureType
        .optional()
        .describe('Extra: "binary" (default, two levels) or "continuous" (a dose: the effect is a slope per unit; methods.md, "Rates, doses, absolute effects").'),
      reference: z.string().optional().describe('Reference level; "0" for a 0/1 intervention. Required for a binary intervention; not used for a continuous one.'),
    }),
    modifier: z.object({
      column: columnName,
      type: variableType,
      reference: z.string().optional().describe('Reference level (categorical modifiers); omitted for continuous ones.'),
      centre: z
        .union([z.enum(['none', 'mean', 'median']), z.number()])
        .optional()
        .describe('Extra (continuous): subtract this from the modifier before forming the product; default "none".'),
      slopesAt: slopePoints.optional().describe('Extra (continuous): where to report simple slopes; default mean and ± 1 SD.'),
      ordered: z
        .object({ scores: z.record(levelName, z.number()).describe('A score for every level of the modifier, from the dictionary.') })
        .optional()
        .describe('Extra (categorical): the modifier is ordered; the scores used by the test for trend, carried in the spec so a run is reproducible.'),
    }).optional().describe('The modifier of a single analysis; a subgroup screen gives "modifiers" instead.'),
    modifiers: screenModifiers(columnName, variableType).optional(),
    covariates: z.array(
      z.object({
        column: columnName,
        type: variableType,
        reference: z.string().optional(),
      }),
    ),
    model: modelFamily,
    ci: z.object({
      level: z.number().gt(0.5).lt(1),
      method: ciMethod,
      replicates: z.number().int().min(100).max(100_000).optional().describe('Bootstrap replicates; default 2000.'),
      seed: z.number().int().min(0).max(0xffffffff).optional().describe('Seed of the bootstrap stream; default 1.'),
    }),
    effectMeasure: effectMeasure.optional().describe('Extra: must agree with the model.'),
    alpha: z.number().gt(0).lt(0.5).optional().describe('Extra: level of tests, Johnson-Neyman and planning; default 1 − ci.level.'),
    multiplicity: multiplicity.optional().describe('Extra: the adjusted p-value the summary treats as primary; default holm.'),
    preventive: z.boolean().optional().describe('Extra: recode each level so that the lowest-risk joint cell is the reference.'),
    standardErrors: z.enum(['model', 'hc3', 'robust']).optional().describe('Extra: classical or HC3 (linear), model-based or robust HC0 (poisson); default model.'),
    cluster: clusterSpec.optional().describe('Extra: cluster-robust (CR1) variance with clusters given by this column.'),
    weights: weightsSpec.optional().describe('Extra: frequency weights (positive integers): each row stands for that many identical rows.'),
    standardize: z
      .boolean()
      .optional()
      .describe('Extra (binary outcome, categorical modifier): standardized risks under each arm within each modifier level, their risk difference, NNT and interaction contrast.'),
    planning: z
      .object({
        interaction: z.number().optional().describe('Interaction size: ratio of ratios (GLMs) or difference (linear).'),
        power: z.number().gt(0.05).lt(1).optional().describe('Target power; default 0.8.'),
      })
      .optional(),
  })
  .refine((spec) => (spec.modifier === undefined) !== (spec.modifiers === undefined), { message: 'Give either "modifier" (one modifier) or "modifiers" (a subgroup screen), not both and not neither.', path: ['modifiers'] })
  .describe('An effect-modification analysis specification.');

/** Any specification the schema accepts: a single analysis or a subgroup screen (ScreenSpec). */
export type AnySpec = z.output<typeof SpecSchema>;
/** A specification with one modifier: what the form builds, the API accepts, a run snapshots and the engine reads. */
export type Spec = AnySpec & { modifier: NonNullable<AnySpec['modifier']> };
export type ScreenSpec = Omit<AnySpec, 'modifier'> & { modifier?: undefined; modifiers: NonNullable<AnySpec['modifiers']> };
export type OutcomeType = z.output<typeof outcomeType>;
export type ExposureType = z.output<typeof exposureType>;
export type ModelFamily = z.output<typeof modelFamily>;
export type CiMethod = z.output<typeof ciMethod>;
export type EffectMeasure = z.output<typeof effectMeasure>;
export type MultiplicityCorrection = z.output<typeof multiplicity>;
/** Where the conditional effect of a continuous modifier is reported (simple slopes). */
export type SlopePoints = z.output<typeof slopePoints>;

// ---------------------------------------------------------------------------------------
// Result. Its parts are named so that the engine's modules can type what they build.
//
// A field added after results were first stored is `.nullable().default(null)`: a result
// stored by an earlier engine lacks it, and reads back with null, meaning "not recorded by
// the engine that made this result" (never a made-up count). The engine always sets it.
// ---------------------------------------------------------------------------------------

const num = z.number().nullable();
const interval = z.strictObject({ estimate: num, lower: num, upper: num });
const effectInterval = z.strictObject({ estimate: num, lower: num, upper: num, se: num, p: num });
const measureInterval = z.strictObject({ estimate: num, lower: num, upper: num, se: num, method: ciMethod });
const test = z.strictObject({ statistic: num, df: z.number(), p: num });
const cellName = z.strictObject({ exposure: z.string(), modifier: z.string() });

const coefficient = z.strictObject({
  term: z.string(),
  estimate: num,
  se: num,
  statistic: num,
  p: num,
  lower: num,
  upper: num,
  seRobust: num.optional().describe('Linear models: HC3 standard error beside the classical one.'),
});

const modelSummary = z.strictObject({
  family: modelFamily,
  requestedFamily: modelFamily.describe('The family asked for (differs from family after the log-binomial fallback).'),
  link: z.enum(['logit', 'log', 'identity']),
  iterations: z.number().int(),
  converged: z.boolean(),
  logLik: num,
  deviance: num,
  aic: num,
  residualDf: z.number(),
  dispersion: num.describe('Residual variance (linear) or 1 (GLMs).'),
  standardErrors: z.enum(['model', 'HC0', 'HC3', 'CR1']),
  coefficients: z.array(coefficient),
  covariance: z.array(z.array(num)).describe('Covariance of the coefficients (the one used for the measures), by term order.'),
});

const stratumEffect = z.strictObject({
  level: z.string(),
  n: z.number(),
  events: num.describe('Binary outcomes: events in the stratum.'),
  effect: effectInterval,
  pAdjusted: z.strictObject({ holm: num, bh: num }),
});

const modifierEffect = z.strictObject({ exposure: z.string(), level: z.string(), effect: effectInterval });

const jointCell = z.strictObject({
  exposure: z.string(),
  modifier: z.string(),
  n: z.number(),
  events: num,
  risk: num.describe('Binary: proportion with the event.'),
  mean: num.describe('Continuous: mean outcome.'),
  effect: effectInterval.nullable().describe('Effect against the reference cell; null for the reference cell itself.'),
});

const multiplicativeEntry = z.strictObject({ level: z.string(), estimate: num, lower: num, upper: num, p: num, se: num });

const additiveEntry = z.strictObject({
  level: z.string(),
  reference: cellName.describe('The joint cell used as the reference (differs from the coded reference after preventive recoding).'),
  reri: measureInterval.nullable(),
  ap: measureInterval.nullable(),
  apStar: measureInterval.nullable(),
  s: measureInterval.nullable().describe('Synergy index; its se is that of ln S.'),
  differenceInDifferences: effectInterval.nullable().describe('Linear models: the product coefficient, the difference of differences.'),
});

const omnibusTest = z.strictObject({
  test: z.enum(['likelihood-ratio', 'F', 'wald', 'wald-robust']),
  statistic: num,
  df: z.number(),
  df2: num,
  p: num,
});

const slopeEntry = z.strictObject({ label: z.string(), at: z.number(), estimate: num, se: num, lower: num, upper: num, p: num });

const johnsonNeymanResult = z.strictObject({
  bounds: z.union([z.tuple([z.number(), z.number()]), z.tuple([z.number()])]).nullable(),
  significant: z.enum(['outside', 'inside', 'everywhere', 'nowhere']),
  observed: z.tuple([z.number(), z.number()]),
  boundsInRange: z.array(z.boolean()),
  criticalValue: z.number(),
});

const bandPoint = z.strictObject({ x: z.number(), estimate: num, lower: num, upper: num });

/** Where a continuous modifier's values lie: the 5th and 95th percentiles (R's type 7) and counts in ten equal-width bins. */
const modifierSpread = z.strictObject({
  p5: z.number(),
  p95: z.number(),
  bins: z.array(z.strictObject({ from: z.number(), to: z.number(), n: z.number().int() })).describe('Each bin holds from ≤ x < to; the last also holds x = to.'),
});

const stratifiedTableRow = z.strictObject({
  level: z.string(),
  a: z.number().describe('Exposed with the event.'),
  b: z.number().describe('Exposed without the event.'),
  c: z.number().describe('Unexposed with the event.'),
  d: z.number().describe('Unexposed without the event.'),
  oddsRatio: interval.nullable(),
  riskRatio: interval.nullable(),
  riskDifference: interval.nullable(),
});

const stratifiedTables = z.strictObject({
  strata: z.array(stratifiedTableRow),
  mantelHaenszel: z.strictObject({
    oddsRatio: interval.nullable(),
    riskRatio: interval.nullable(),
    riskDifference: interval.nullable().describe('Pooled risk difference, limits from Sato (1989) variance.'),
    riskDifferenceVariances: z
      .array(z.strictObject({ variance: z.enum(['sato', 'greenland-robins']), label: z.string(), se: num, lower: num, upper: num }))
      .nullable()
      .default(null)
      .describe('The pooled risk difference under both published variances, Sato (1989) and Greenland-Robins (1985), each labelled; null when not available or not recorded.'),
    chiSquare: test.extend({ continuityCorrection: z.boolean() }),
  }),
  homogeneity: z.strictObject({ breslowDay: test.nullable(), breslowDayTarone: test.nullable(), woolf: test.nullable() }),
});

const bootstrapAccount = z.strictObject({
  replicates: z.number().int(),
  successful: z.number().int(),
  failed: z.number().int().describe('Replicates left out of the percentile intervals (sum of failures).'),
  failures: z
    .strictObject({
      notConverged: z.number().int(),
      separated: z.number().int(),
      fitFailed: z.number().int(),
      undefinedMeasure: z.number().int(),
    })
    .nullable()
    .default(null)
    .describe('Replicates left out, by reason; null in results stored before they were counted by reason.'),
  flagged: z.boolean().nullable().default(null).describe('More than 1% of replicates were left out; null when not recorded.'),
  rule: z.string().nullable().default(null).describe('The rule by which replicates are left out and intervals flagged; null when not recorded.'),
  seed: z.number().int(),
});

const planningLevel = z.strictObject({
  level: z.string(),
  se: num.describe('Standard error of the product term (link scale) at the observed n.'),
  interaction: num.describe('Interaction size used, on the effect scale.'),
  power: num,
  detectable: z
    .strictObject({ lower: num, upper: num })
    .describe('Smallest interaction detectable with targetPower, on the effect scale (both directions for ratios).'),
  requiredN: num.describe('Rows needed for targetPower at interaction, scaling the standard error by sqrt(n/n\').'),
});

const planningBlock = z.strictObject({
  method: z.literal('normal-approximation'),
  alpha: z.number(),
  targetPower: z.number(),
  n: z.number(),
  interactionSource: z.enum(['spec', 'main-effect']).describe('Where the interaction size came from.'),
  levels: z.array(planningLevel),
});

const screenBlock = screenBlockSchema({ stratumEffect, slopeEntry, omnibusTest, variableType, num });

const engineWarning = z.strictObject({
  code: z.string(),
  message: z.string(),
  column: z.string().optional(),
  level: z.string().optional(),
  term: z.string().optional(),
});

export const ResultSchema = z
  .strictObject({
    n: z.number().int(),
    dropped: z.number().int(),
    missingByColumn: z
      .array(z.strictObject({ column: z.string(), rows: z.number().int() }))
      .nullable()
      .default(null)
      .describe('Rows missing in each used column that has any; a left-out row may count under several columns. Null in results stored before the per-column counts.'),
    engineVersion: z.string(),
    seed: z.number().int().nullable().describe('Seed of the bootstrap stream, null when no bootstrap was run.'),
    effectMeasure,
    ciLevel: z.number(),
    ciMethod,
    alpha: z.number(),
    multiplicity,
    outcome: z.strictObject({
      column: z.string(),
      type: outcomeType,
      event: z.string().nullable(),
      events: num,
      mean: num,
    }),
    exposure: z.strictObject({
      column: z.string(),
      reference: z.string().describe('Reference level; empty for a continuous intervention.'),
      level: z.string().describe('The level compared with the reference; empty for a continuous intervention.'),
      type: exposureType.nullable().default(null).describe('Binary or continuous (a dose); null in results stored before continuous interventions.'),
      mean: num.default(null).describe('Continuous intervention: mean over the analysed rows.'),
      sd: num.default(null).describe('Continuous intervention: standard deviation over the analysed rows.'),
    }),
    modifier: z.strictObject({
      column: z.string(),
      type: variableType,
      reference: z.string().nullable(),
      levels: z.array(z.string()).nullable(),
      centre: num,
      mean: num,
      sd: num,
      observed: z.tuple([z.number(), z.number()]).nullable(),
    }),
    covariates: z.array(
      z.strictObject({
        column: z.string(),
        type: variableType,
        reference: z.string().nullable(),
        terms: z.array(z.string()),
      }),
    ),
    model: modelSummary,
    strata: z.array(stratumEffect),
    modifierEffects: z.array(modifierEffect),
    joint: z.strictObject({ reference: cellName, cells: z.array(jointCell) }).nullable(),
    interaction: z.strictObject({
      multiplicative: z.array(multiplicativeEntry),
      additive: z.array(additiveEntry),
      omnibus: omnibusTest,
    }),
    slopes: z.array(slopeEntry).optional(),
    johnsonNeyman: johnsonNeymanResult.optional(),
    band: z.array(bandPoint).optional(),
    spread: modifierSpread.optional().describe('Continuous modifiers: where the observed values lie, to say where the data are thin.'),
    stratifiedTables: stratifiedTables.nullable(),
    bootstrap: bootstrapAccount
      .nullable()
      .describe('Percentile bootstrap accounting: replicates left out of the intervals, by reason, the rule applied, and whether the intervals are flagged.'),
    planning: planningBlock,
    standardized: standardizedEffects
      .nullable()
      .default(null)
      .describe('Standardized risks, risk differences, NNT and interaction contrasts per modifier level; null when not asked for or not recorded.'),
    eValues: eValues.nullable().default(null).describe('E-values of each stratum ratio and its interval; null for differences or when not recorded.'),
    clustering: clusteringBlock.nullable().default(null).describe('Cluster-robust variance: its name and number of clusters; null without clusters or when not recorded.'),
    rates: ratesBlock.nullable().default(null).describe('Count outcomes: crude rates per 1,000 person-time units and the overdispersion check; null otherwise or when not recorded.'),
    weights: weightsBlock.nullable().default(null).describe('Frequency weights: rows of the extract and the units they stand for; null without weights or when not recorded.'),
    dose: doseBlock.nullable().default(null).describe('Continuous intervention and a categorical modifier: slopes per level and their differences; null otherwise.'),
    additiveNote: z
      .string()
      .nullable()
      .default(null)
      .describe('Why the additive measures (RERI, AP, S, joint table) are not given, when they do not apply; null when they are given.'),
    trend: trendBlock.nullable().default(null).describe('Ordered modifier: test for trend in the intervention\'s effect across the levels; null otherwise.'),
    predictions: predictionsBlock.nullable().default(null).describe('Predicted outcome for the profile plot, with the covariate values used; null in results stored before.'),
    screen: screenBlock.nullable().default(null).describe('Subgroup screen: every modifier\'s effects and interaction test with Holm and BH p; the other fields are then the first modifier\'s analysis. Null for a single analysis.'),
    warnings: z.array(engineWarning),
  })
  .describe('The result of an effect-modification analysis.');

/** The result of an analysis: what the engine returns, the API serves and a run stores. */
export type Result = z.output<typeof ResultSchema>;
export type Interval = z.output<typeof interval>;
/** An interval with the standard error of its estimate (on the link scale for ratios) and p. */
export type EffectInterval = z.output<typeof effectInterval>;
/** An interval of RERI, AP, AP* or S with its delta-method standard error (of ln S for S) and how the limits were computed. */
export type MeasureInterval = z.output<typeof measureInterval>;
export type TestResult = z.output<typeof test>;
export type Coefficient = z.output<typeof coefficient>;
export type ModelSummary = z.output<typeof modelSummary>;
export type StratumEffect = z.output<typeof stratumEffect>;
export type ModifierEffect = z.output<typeof modifierEffect>;
export type JointCell = z.output<typeof jointCell>;
export type MultiplicativeEntry = z.output<typeof multiplicativeEntry>;
export type AdditiveEntry = z.output<typeof additiveEntry>;
export type OmnibusTest = z.output<typeof omnibusTest>;
export type SlopeEntry = z.output<typeof slopeEntry>;
export type JohnsonNeymanResult = z.output<typeof johnsonNeymanResult>;
export type BandPoint = z.output<typeof bandPoint>;
export type ModifierSpread = z.output<typeof modifierSpread>;
export type StratifiedTableRow = z.output<typeof stratifiedTableRow>;
export type StratifiedTables = z.output<typeof stratifiedTables>;
export type BootstrapAccount = z.output<typeof bootstrapAccount>;
export type PlanningLevel = z.output<typeof planningLevel>;
export type PlanningBlock = z.output<typeof planningBlock>;
export type { ClusteringBlock, RatesBlock, WeightsBlock } from './clusterRateWeightSchemas.js';
export type { StandardizedRisk, NumberNeeded, StandardizedLevel, StandardizedEffects, EValueEntry, EValues } from './absoluteEffectSchemas.js';
export type { DoseBlock, TrendBlock, PredictionsBlock } from './doseTrendSchemas.js';
export type EngineWarning = z.output<typeof engineWarning>;
export type ScreenBlock = z.output<typeof screenBlock>;
export type ScreenEntry = ScreenBlock['modifiers'][number];

export const ErrorSchema = z.strictObject({
  error: z.strictObject({
    code: z.string(),
    message: z.string(),
    column: z.string().optional(),
    level: z.string().optional(),
    term: z.string().optional(),
  }),
});

/** JSON Schema (draft 2020-12) documents of the spec and the result, as committed. */
export function jsonSchemas(): { spec: unknown; result: unknown } {
  return {
    spec: z.toJSONSchema(SpecSchema, { target: 'draft-2020-12' }),
    result: z.toJSONSchema(ResultSchema, { target: 'draft-2020-12' }),
  };
}
