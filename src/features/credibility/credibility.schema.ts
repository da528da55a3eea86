/**
 * A run's credibility assessment over the API (issue 16 §1): the items Crossgrain works out
 * from its own records, the clinician's two ratings, and the overall rating by Crossgrain's
 * rule (credibilityRule.ts).
 */
import { z } from 'zod';
import { LEVELS, PRIOR_RATINGS, RATIONALE_RATINGS } from './credibilityRule';

const note = z.string().trim().max(2000, 'Keep the note under 2,000 characters.');

/** PUT /api/runs/{runId}/credibility: the clinician's ratings; both scales are required, the notes optional. */
export const CredibilityBody = z
  .strictObject({
    rationale: z.enum(RATIONALE_RATINGS, { message: 'Rate the clinical or biological rationale: strong, plausible, weak or none.' }),
    rationaleNote: note.default(''),
    priorEvidence: z.enum(PRIOR_RATINGS, { message: 'Rate the prior evidence: supports, none-known, mixed or contradicts.' }),
    priorEvidenceNote: note.default(''),
  })
  .meta({ id: 'CredibilityRatingRequest' });
export type CredibilityBody = z.infer<typeof CredibilityBody>;

/** Whether an item speaks for the claim, against it, does not apply, or waits for a rating. */
export const ITEM_STANDINGS = ['for', 'against', 'not-applicable', 'not-rated'] as const;
export const CredibilityItem = z.object({
  key: z.string(),
  question: z.string(),
  answer: z.string(),
  standing: z.enum(ITEM_STANDINGS),
  /** Computed by Crossgrain (never editable), or rated by a clinician. */
  source: z.enum(['computed', 'clinician']),
});
export type CredibilityItem = z.infer<typeof CredibilityItem>;

export const CredibilityView = z
  .object({
    runId: z.uuid(),
    computed: z.object({
      prespecified: z.object({ value: z.boolean(), at: z.string().nullable(), source: z.enum(['register', 'declaration']).nullable() }),
      direction: z.object({ predicted: z.enum(['stronger', 'weaker', 'reversed']).nullable(), where: z.string(), agrees: z.boolean().nullable() }),
      withinStudy: z.literal(true),
      modifiersExamined: z.object({ count: z.number().int(), columns: z.array(z.string()) }),
      interactionTest: z.object({ test: z.string(), p: z.number().nullable(), adjustedP: z.number().nullable(), alpha: z.number(), holdsUnadjusted: z.boolean(), holdsAdjusted: z.boolean() }),
      continuousModifier: z.enum(['continuous', 'number-in-categories', 'not-applicable']),
      relatedOutcomes: z.array(z.object({ outcome: z.string(), runId: z.uuid(), consistent: z.boolean() })),
    }),
    clinician: z
      .object({
        rationale: z.enum(RATIONALE_RATINGS), rationaleNote: z.string(), priorEvidence: z.enum(PRIOR_RATINGS), priorEvidenceNote: z.string(),
        ratedBy: z.object({ id: z.uuid(), name: z.string() }), ratedAt: z.string(),
      })
      .nullable(),
    items: z.array(CredibilityItem),
    overall: z.object({ level: z.enum(LEVELS), label: z.string(), reasons: z.array(z.string()), provisional: z.boolean() }),
    /** The rule in one paragraph, as shown under the rating. */
    rule: z.string(),
    canRate: z.boolean(),
  })
  .meta({ id: 'Credibility' });
export type CredibilityView = z.infer<typeof CredibilityView>;
