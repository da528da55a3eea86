/**
 * The review of runs: request bodies and the shapes the API answers with. A run's review
 * state is its latest step other than a co-signature: `draft` (never submitted),
 * `submitted`, `sent-back` or `signed-off`.
 */
import { z } from 'zod';

export const REVIEW_STATES = ['draft', 'submitted', 'sent-back', 'signed-off'] as const;
export type ReviewState = (typeof REVIEW_STATES)[number];

export const REVIEW_STATE_LABEL: Record<ReviewState, string> = {
  draft: 'Draft',
  submitted: 'Submitted for review',
  'sent-back': 'Sent back',
  'signed-off': 'Signed off',
};

const note = z.string().max(4000, 'Keep the note under 4,000 characters.');

export const SubmitBody = z
  .object({ note: note.optional() })
  .meta({ id: 'ReviewSubmitRequest' });

/**
 * Meanings a signer may pick from; they may also type their own. A decision is an
 * electronic signature, so it always says what it means.
 */
export const SIGN_OFF_MEANINGS = ['approved for an internal brief', 'reviewed, no objection', 'clinically plausible, fit to brief'] as const;
export const SEND_BACK_MEANINGS = ['returned for changes', 'not clinically plausible as it stands'] as const;

export const DecisionBody = z
  .object({
    decision: z.enum(['sign-off', 'send-back'], { message: 'Choose sign-off or send-back.' }),
    note: note.default(''),
    /** What the signature means: one of the listed meanings or the signer's own words. */
    meaning: z
      .string({ message: 'Say what your signature means.' })
      .trim()
      .min(1, 'Say what your signature means.')
      .max(200, 'Keep the meaning under 200 characters.'),
    /** The signer's own password, entered again for this signature. */
    password: z.string({ message: 'Enter your password to sign.' }).min(1, 'Enter your password to sign.').max(1024),
  })
  .refine((body) => body.decision !== 'send-back' || body.note.trim().length > 0, {
    path: ['note'],
    message: 'Say what needs to change before the run can be signed off.',
  })
  .meta({ id: 'ReviewDecisionRequest' });

export const CommentBody = z
  .object({
    body: z.string().trim().min(1, 'Write the comment first.').max(4000, 'Keep the comment under 4,000 characters.'),
    /** The comment this one answers; replies to a reply join the same thread. */
    parentId: z.uuid().optional(),
  })
  .meta({ id: 'RunCommentRequest' });

const Person = z.object({ id: z.uuid(), name: z.string() });

export const ReviewView = z
  .object({
    runId: z.uuid(),
    state: z.enum(REVIEW_STATES),
    /**
     * Sign-offs the initiative requires from distinct clinicians, how many signed since the
     * latest submission, and who they are (a clinician who signed waits for the others).
     */
    signOffs: z.object({ required: z.number().int().min(1), given: z.number().int().min(0), signedBy: z.array(z.uuid()) }),
    steps: z.array(
      z.object({
        /** `co-signed`: a sign-off short of those the initiative requires; it leaves the state as it was. */
        kind: z.enum(['submitted', 'co-signed', 'signed-off', 'sent-back']), actor: Person, note: z.string(), at: z.string(),
        /** A decision's stated meaning; null on submissions (and on decisions from before signatures). */
        meaning: z.string().nullable(),
        /** SHA-256 of the canonical result the decision signed (the digest verification re-runs compare). */
        resultDigest: z.string().nullable(),
      }),
    ),
    comments: z.array(z.object({ id: z.uuid(), parentId: z.uuid().nullable(), author: Person, body: z.string(), at: z.string() })),
  })
  .meta({ id: 'RunReview' });
export type ReviewView = z.infer<typeof ReviewView>;

export const BoardView = z
  .object({
    columns: z.array(
      z.object({
        state: z.enum(REVIEW_STATES),
        analyses: z.array(
          z.object({
            analysisId: z.uuid(), title: z.string(), question: z.string(),
            run: z.object({ id: z.uuid(), status: z.string(), startedBy: Person, queuedAt: z.string() }).nullable(),
            lastStep: z.object({ kind: z.string(), actor: Person, at: z.string(), note: z.string(), meaning: z.string().nullable() }).nullable(),
          }),
        ),
      }),
    ),
  })
  .meta({ id: 'ReviewBoard' });
export type BoardView = z.infer<typeof BoardView>;
