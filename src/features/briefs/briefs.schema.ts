/**
 * Briefs: request bodies and the shapes the API answers with. A brief is a `draft` until
 * published; published versions are numbered and immutable; a `retracted` brief keeps its
 * versions, marked with the reason.
 */
import { z } from 'zod';

export const BRIEF_STATES = ['draft', 'published', 'retracted'] as const;
export type BriefState = (typeof BRIEF_STATES)[number];
export const BRIEF_STATE_LABEL: Record<BriefState, string> = { draft: 'Draft', published: 'Published', retracted: 'Retracted' };

export const PLOT_CHOICES = ['forest', 'modifier', 'none'] as const;

const title = z.string().trim().min(1, 'Give the brief a title.').max(200, 'Keep the title under 200 characters.');
const summary = z.string().trim().min(1, 'Write a short summary.').max(4000, 'Keep the summary under 4,000 characters.');
const ownCautions = z
  .array(z.string().trim().min(1, 'A caution cannot be empty.').max(600, 'Keep each caution under 600 characters.'))
  .max(10, 'Add at most 10 cautions of your own.');

export const NewBriefBody = z.object({ title, summary }).meta({ id: 'NewBriefRequest' });
export type NewBriefBody = z.infer<typeof NewBriefBody>;

export const UpdateBriefBody = z
  .object({
    title: title.optional(),
    summary: summary.optional(),
    /** The one plot: the stratum forest plot, the effect across a continuous modifier, or none. */
    plot: z.enum(PLOT_CHOICES, { message: 'Choose the forest plot, the modifier plot or no plot.' }).optional(),
    ownCautions: ownCautions.optional(),
  })
  .meta({ id: 'UpdateBriefRequest' });
export type UpdateBriefBody = z.infer<typeof UpdateBriefBody>;

export const CorrectionBody = z
  .object({
    note: z.string().trim().min(1, 'Say what changed in this correction.').max(2000, 'Keep the note under 2,000 characters.'),
    title: title.optional(),
    summary: summary.optional(),
    plot: z.enum(PLOT_CHOICES).optional(),
    ownCautions: ownCautions.optional(),
  })
  .meta({ id: 'BriefCorrectionRequest' });
export type CorrectionBody = z.infer<typeof CorrectionBody>;

export const RetractionBody = z
  .object({ reason: z.string().trim().min(1, 'Give the reason for the retraction.').max(2000, 'Keep the reason under 2,000 characters.') })
  .meta({ id: 'BriefRetractionRequest' });

export const DistributionBody = z
  .object({
    /** Extra addresses for this send, on top of the initiative's distribution list. */
    recipients: z.array(z.email({ message: 'Each recipient must be a valid e-mail address.' }).max(320)).max(50, 'Send to at most 50 extra recipients at once.').default([]),
  })
  .meta({ id: 'BriefDistributionRequest' });

export const PdfQuery = z.object({
  version: z.coerce.number({ message: 'The version is a whole number.' }).int('The version is a whole number.').min(1, 'Versions start at 1.').optional(),
});

export const BriefSettingsBody = z
  .object({
    cellThreshold: z.number().int('The threshold is a whole number.').min(2, 'The threshold is at least 2.').max(100, 'The threshold is at most 100.'),
    pageSize: z.enum(['A4', 'LETTER'], { message: 'Choose A4 or US Letter.' }),
  })
  .meta({ id: 'BriefSettingsRequest' });

export const RecipientBody = z
  .object({
    name: z.string().trim().min(1, 'Give the recipient a name.').max(200),
    email: z.email({ message: 'That is not a valid e-mail address.' }).max(320),
  })
  .meta({ id: 'BriefRecipientRequest' });

const Person = z.object({ id: z.uuid(), name: z.string() });

export const BriefView = z
  .object({
    id: z.uuid(), initiativeId: z.uuid(), runId: z.uuid(), analysisId: z.uuid(), state: z.enum(BRIEF_STATES),
    title: z.string(), summary: z.string(), plot: z.enum(PLOT_CHOICES), ownCautions: z.array(z.string()),
    createdBy: Person, createdAt: z.string(), updatedAt: z.string(),
    retraction: z.object({ at: z.string(), by: Person, reason: z.string() }).nullable(),
    versions: z.array(z.object({ version: z.number(), publishedAt: z.string(), publishedBy: Person, changeNote: z.string(), sha256: z.string(), pageSize: z.string() })),
    /** The run was re-run or sent back after the brief was drafted. */
    newerWork: z.array(z.string()),
  })
  .meta({ id: 'Brief' });
export type BriefView = z.infer<typeof BriefView>;

export const PublishedVersion = z.object({ version: z.number().int() }).meta({ id: 'PublishedBriefVersion' });
export const DistributionAccepted = z.object({ sendId: z.uuid(), recipients: z.number().int() }).meta({ id: 'BriefDistributionAccepted' });
