import { z } from 'zod';

/**
 * The engine's specification and result as zod schemas: what the API validates, serves,
 * and the audit trail stores. They describe the same shapes as src/engine/types.ts (the
 * engine core cannot import zod); tests parse real results with these strict schemas, and
 * result.schema.json / spec.schema.json are generated from them (npm run -s engine -- --write-schemas).
 */

const levelName = z.string().min(1);
const columnName = z.string().min(1);

export const SpecSchema = z
  .object({
    outcome: z.object({
      column: columnName,
      type: z.enum(['binary', 'continuous']),
      event: levelName.optional().describe('Extra: the level counted as the event when a binary outcome is categorical.'),
    }),
    exposure: z.object({
      column: columnName,
      reference: z.string().describe('Reference level; "0" for a 0/1 intervention.'),
    }),
    modifier: z.object({
      column: columnName,
      type: z.enum(['categorical', 'continuous']),
      reference: z.string().optional().describe('Reference level (categorical modifiers); omitted for continuous ones.'),
      centre: z
        .union([z.enum(['none', 'mean', 'median']), z.number()])
        .optional()
        .describe('Extra (continuous): subtract this from the modifier before forming the product; default "none".'),
      slopesAt: z
        .discriminatedUnion('kind', [
          z.object({ kind: z.literal('sd') }),
          z.object({ kind: z.literal('percentiles'), percentiles: z.array(z.number().min(0).max(100)).min(1).max(20) }),
          z.object({ kind: z.literal('values'), values: z.array(z.number()).min(1).max(20) }),
        ])
        .optional()
        .describe('Extra (continuous): where to report simple slopes; default mean and ± 1 SD.'),
    }),
    covariates: z.array(
      z.object({
        column: columnName,
        type: z.enum(['categorical', 'continuous']),
        reference: z.string().optional(),
      }),
    ),
    model: z.enum(['logistic', 'modified-poisson', 'log-binomial', 'linear']),
    ci: z.object({
      level: z.number().gt(0.5).lt(1),
      method: z.enum(['delta', 'mover', 'bootstrap']),
      replicates: z.number().int().min(100).max(100_000).optional().describe('Bootstrap replicates; default 2000.'),
      seed: z.number().int().min(0).max(0xffffffff).optional().describe('Seed of the bootstrap stream; default 1.'),
    }),
    effectMeasure: z.enum(['OR', 'RR', 'RD', 'MD']).optional().describe('Extra: must agree with the model.'),
    alpha: z.number().gt(0).lt(0.5).optional().describe('Extra: level of tests, Johnson-Neyman and planning; default 1 − ci.level.'),
    multiplicity: z.enum(['none', 'holm', 'bh']).optional().describe('Extra: the adjusted p-value the summary treats as primary; default holm.'),
    preventive: z.boolean().optional().describe('Extra: recode each level so that the lowest-risk joint cell is the reference.'),
    standardErrors: z.enum(['model', 'hc3']).optional().describe('Extra (linear): classical or HC3 standard errors; default model.'),
    planning: z
      .object({
        interaction: z.number().optional().describe('Interaction size: ratio of ratios (GLMs) or difference (linear).'),
        power: z.number().gt(0.05).lt(1).optional().describe('Target power; default 0.8.'),
      })
      .optional(),
  })
  .describe('An effect-modification analysis specification.');

export type Spec = z.infer<typeof SpecSchema>;

const num = z.number().nullable();
const interval = z.strictObject({ estimate: num, lower: num, upper: num });
const effectInterval = z.strictObject({ estimate: num, lower: num, upper: num, se: num, p: num });
const measureInterval = z
  .strictObject({ estimate: num, lower: num, upper: num, se: num, method: z.enum(['delta', 'mover', 'bootstrap']) })
  .nullable();
const test = z.strictObject({ statistic: num, df: z.number(), p: num });

export const ResultSchema = z
  .strictObject({
    n: z.number().int(),
    dropped: z.number().int(),
    missingByColumn: z
      .array(z.strictObject({ column: z.string(), rows: z.number().int() }))
      .describe('Rows missing in each used column that has any; a left-out row may count under several columns.'),
    engineVersion: z.string(),
    seed: z.number().int().nullable().describe('Seed of the bootstrap stream, null when no bootstrap was run.'),
    effectMeasure: z.enum(['OR', 'RR', 'RD', 'MD']),
    ciLevel: z.number(),
    ciMethod: z.enum(['delta', 'mover', 'bootstrap']),
    alpha: z.number(),
    multiplicity: z.enum(['none', 'holm', 'bh']),
    outcome: z.strictObject({
      column: z.string(),
      type: z.enum(['binary', 'continuous']),
      event: z.string().nullable(),
      events: num,
      mean: num,
    }),
    exposure: z.strictObject({ column: z.string(), reference: z.string(), level: z.string() }),
    modifier: z.strictObject({
      column: z.string(),
      type: z.enum(['categorical', 'continuous']),
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
        type: z.enum(['categorical', 'continuous']),
        reference: z.string().nullable(),
        terms: z.array(z.string()),
      }),
    ),
    model: z.strictObject({
      family: z.enum(['logistic', 'modified-poisson', 'log-binomial', 'linear']),
      requestedFamily: z.enum(['logistic', 'modified-poisson', 'log-binomial', 'linear']),
      link: z.enum(['logit', 'log', 'identity']),
      iterations: z.number().int(),
      converged: z.boolean(),
      logLik: num,
      deviance: num,
      aic: num,
      residualDf: z.number(),
      dispersion: num,
      standardErrors: z.enum(['model', 'HC0', 'HC3']),
      coefficients: z.array(
        z.strictObject({
          term: z.string(),
          estimate: num,
          se: num,
          statistic: num,
          p: num,
          lower: num,
          upper: num,
          seRobust: num.optional(),
        }),
      ),
      covariance: z.array(z.array(num)),
    }),
    strata: z.array(
      z.strictObject({
        level: z.string(),
        n: z.number(),
        events: num,
        effect: effectInterval,
        pAdjusted: z.strictObject({ holm: num, bh: num }),
      }),
    ),
    modifierEffects: z.array(z.strictObject({ exposure: z.string(), level: z.string(), effect: effectInterval })),
    joint: z
      .strictObject({
        reference: z.strictObject({ exposure: z.string(), modifier: z.string() }),
        cells: z.array(
          z.strictObject({
            exposure: z.string(),
            modifier: z.string(),
            n: z.number(),
            events: num,
            risk: num,
            mean: num,
            effect: effectInterval.nullable(),
          }),
        ),
      })
      .nullable(),
    interaction: z.strictObject({
      multiplicative: z.array(z.strictObject({ level: z.string(), estimate: num, lower: num, upper: num, p: num, se: num })),
      additive: z.array(
        z.strictObject({
          level: z.string(),
          reference: z.strictObject({ exposure: z.string(), modifier: z.string() }),
          reri: measureInterval,
          ap: measureInterval,
          apStar: measureInterval,
          s: measureInterval,
          differenceInDifferences: effectInterval.nullable(),
        }),
      ),
      omnibus: z.strictObject({
        test: z.enum(['likelihood-ratio', 'F', 'wald', 'wald-robust']),
        statistic: num,
        df: z.number(),
        df2: num,
        p: num,
      }),
    }),
    slopes: z
      .array(z.strictObject({ label: z.string(), at: z.number(), estimate: num, se: num, lower: num, upper: num, p: num }))
      .optional(),
    johnsonNeyman: z
      .strictObject({
        bounds: z.union([z.tuple([z.number(), z.number()]), z.tuple([z.number()])]).nullable(),
        significant: z.enum(['outside', 'inside', 'everywhere', 'nowhere']),
        observed: z.tuple([z.number(), z.number()]),
        boundsInRange: z.array(z.boolean()),
        criticalValue: z.number(),
      })
      .optional(),
    band: z.array(z.strictObject({ x: z.number(), estimate: num, lower: num, upper: num })).optional(),
    stratifiedTables: z
      .strictObject({
        strata: z.array(
          z.strictObject({
            level: z.string(),
            a: z.number(),
            b: z.number(),
            c: z.number(),
            d: z.number(),
            oddsRatio: interval.nullable(),
            riskRatio: interval.nullable(),
            riskDifference: interval.nullable(),
          }),
        ),
        mantelHaenszel: z.strictObject({
          oddsRatio: interval.nullable(),
          riskRatio: interval.nullable(),
          riskDifference: interval.nullable().describe('Pooled risk difference, limits from Sato (1989) variance.'),
          riskDifferenceVariances: z
            .array(z.strictObject({ variance: z.enum(['sato', 'greenland-robins']), label: z.string(), se: num, lower: num, upper: num }))
            .nullable()
            .describe('The pooled risk difference under both published variances, Sato (1989) and Greenland-Robins (1985), each labelled.'),
          chiSquare: test.extend({ continuityCorrection: z.boolean() }),
        }),
        homogeneity: z.strictObject({ breslowDay: test.nullable(), breslowDayTarone: test.nullable(), woolf: test.nullable() }),
      })
      .nullable(),
    bootstrap: z
      .strictObject({
        replicates: z.number().int(),
        successful: z.number().int(),
        failed: z.number().int().describe('Replicates left out of the percentile intervals (sum of failures).'),
        failures: z.strictObject({
          notConverged: z.number().int(),
          separated: z.number().int(),
          fitFailed: z.number().int(),
          undefinedMeasure: z.number().int(),
        }),
        flagged: z.boolean().describe('More than 1% of replicates were left out.'),
        rule: z.string().describe('The rule by which replicates are left out and intervals flagged.'),
        seed: z.number().int(),
      })
      .nullable(),
    planning: z.strictObject({
      method: z.literal('normal-approximation'),
      alpha: z.number(),
      targetPower: z.number(),
      n: z.number(),
      interactionSource: z.enum(['spec', 'main-effect']),
      levels: z.array(
        z.strictObject({
          level: z.string(),
          se: num,
          interaction: num,
          power: num,
          detectable: z.strictObject({ lower: num, upper: num }),
          requiredN: num,
        }),
      ),
    }),
    warnings: z.array(
      z.strictObject({
        code: z.string(),
        message: z.string(),
        column: z.string().optional(),
        level: z.string().optional(),
        term: z.string().optional(),
      }),
    ),
  })
  .describe('The result of an effect-modification analysis.');

export type Result = z.infer<typeof ResultSchema>;

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
