import { z } from 'zod';
import { SpecSchema } from '@/engine/boundary/schemas';

/** Body of POST /api/analyses (and PATCH /api/analyses/{id}, where every field is required too). */
export const AnalysisBody = z
  .object({
    initiativeId: z.uuid(),
    extractVersionId: z.uuid(),
    title: z.string().trim().min(3, 'Give the analysis a title of at least 3 characters.').max(200),
    question: z.string().trim().min(10, 'State the question in a sentence (at least 10 characters).').max(4000),
    prespecified: z.boolean(),
    spec: SpecSchema,
  })
  .meta({ id: 'AnalysisBody' });
export type AnalysisBody = z.infer<typeof AnalysisBody>;

export const Created = z.object({ id: z.uuid() }).meta({ id: 'Created' });
export const RunAccepted = z.object({ runId: z.uuid() }).meta({ id: 'RunAccepted' });

export const DownloadQuery = z.object({ format: z.enum(['json', 'csv']).default('json') });
