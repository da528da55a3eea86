import { z } from 'zod';

/**
 * The subgroup screen's parts of the specification and the result, built from the parts of
 * schemas.ts they share (kept here so that schemas.ts stays one readable file).
 */

/** Spec: 2 to 12 candidate modifiers, in place of "modifier". */
export function screenModifiers<C extends z.ZodType, T extends z.ZodType>(columnName: C, variableType: T) {
  return z
    .array(z.object({ column: columnName, type: variableType, reference: z.string().optional() }))
    .min(2)
    .max(12)
    .describe('Subgroup screen: 2 to 12 candidate modifiers, each analysed in a model of its own; in place of "modifier".');
}

/** Result: one entry per candidate modifier, each from a model of its own, with the adjusted interaction p. */
export function screenBlockSchema<S extends z.ZodType, L extends z.ZodType, O extends z.ZodType, T extends z.ZodType, N extends z.ZodType>(parts: {
  stratumEffect: S;
  slopeEntry: L;
  omnibusTest: O;
  variableType: T;
  num: N;
}) {
  const { stratumEffect, slopeEntry, omnibusTest, variableType, num } = parts;
  const entry = z.strictObject({
    column: z.string(),
    type: variableType,
    reference: z.string().nullable(),
    n: z.number().int(),
    dropped: z.number().int(),
    strata: z.array(stratumEffect).describe('Categorical modifiers: the intervention\'s effect within each level.'),
    slopes: z.array(slopeEntry).describe('Continuous modifiers: the intervention\'s effect at the chosen points.'),
    interaction: omnibusTest.describe('The test of the product terms (likelihood ratio, F, or robust Wald).'),
    pAdjusted: z.strictObject({ holm: num, bh: num }).describe('The interaction p adjusted across the screen\'s modifiers.'),
  });
  return z.strictObject({ examined: z.number().int().describe('How many modifiers the screen examined.'), modifiers: z.array(entry) });
}
