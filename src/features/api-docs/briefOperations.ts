/** The brief endpoints of the OpenAPI catalogue (apiCatalogue.ts), kept in a file of their own. */
import { z } from 'zod';
import type { Operation } from './operation';
import {
  BriefSettingsBody, BriefView, CorrectionBody, DistributionAccepted, DistributionBody, NewBriefBody, PdfQuery, PublishedVersion, RecipientBody,
  RetractionBody, UpdateBriefBody,
} from '../briefs/briefs.schema';

const Created = z.object({ id: z.uuid() }).meta({ id: 'CreatedBrief' });
const Settings = z.object({ cellThreshold: z.number().int(), pageSize: z.enum(['A4', 'LETTER']) }).meta({ id: 'BriefSettings' });

export const BRIEF_OPERATIONS: Operation[] = [
  { method: 'GET', path: '/api/runs/{runId}/briefs', tag: 'Briefs', summary: 'The briefs drafted from a run', auth: 'session', status: 200 },
  { method: 'POST', path: '/api/runs/{runId}/briefs', tag: 'Briefs', summary: 'Draft a brief from a signed-off run (analysts)', auth: 'session', body: NewBriefBody, response: Created, status: 201,
    description: '409 when the run is not signed off, saying so; 403 for clinicians and auditors, 404 for non-members. Audited as `brief.drafted`.' },
  { method: 'GET', path: '/api/briefs/{briefId}', tag: 'Briefs', summary: 'A brief with its versions, retraction and newer work', auth: 'session', response: BriefView, status: 200 },
  { method: 'PATCH', path: '/api/briefs/{briefId}', tag: 'Briefs', summary: "Change a draft's title, summary, plot or own cautions (analysts)", auth: 'session', body: UpdateBriefBody, response: BriefView, status: 200,
    description: '409 once the brief is published: a change is then a correction.' },
  { method: 'POST', path: '/api/briefs/{briefId}/publish', tag: 'Briefs', summary: 'Publish a draft as version 1 (analysts)', auth: 'session', response: PublishedVersion, status: 200,
    description: 'Freezes the content, HTML, PDF and its SHA-256. Audited as `brief.published`.' },
  { method: 'POST', path: '/api/briefs/{briefId}/corrections', tag: 'Briefs', summary: 'Publish a correction as the next version (analysts)', auth: 'session', body: CorrectionBody, response: PublishedVersion, status: 201,
    description: 'The note saying what changed is required. Audited as `brief.corrected`.' },
  { method: 'POST', path: '/api/briefs/{briefId}/retraction', tag: 'Briefs', summary: 'Retract a published brief with a reason (analysts)', auth: 'session', body: RetractionBody, response: BriefView, status: 200,
    description: 'The record stays; every version is marked as retracted. Audited as `brief.retracted`.' },
  { method: 'GET', path: '/api/briefs/{briefId}/pdf', tag: 'Briefs', summary: 'The latest published version as a PDF, or ?version=N', auth: 'session', query: PdfQuery, status: 200,
    description: 'application/pdf. Audited as `brief.downloaded`.' },
  { method: 'POST', path: '/api/briefs/{briefId}/distribution', tag: 'Briefs', summary: 'E-mail the latest version with its PDF (analysts)', auth: 'session', body: DistributionBody, response: DistributionAccepted, status: 202,
    description: "To the initiative's distribution list plus the given addresses. Each recipient and the send are audited as `brief.distributed`." },
  { method: 'GET', path: '/api/initiatives/{initiativeId}/briefs', tag: 'Briefs', summary: "The initiative's briefs", auth: 'session', status: 200 },
  { method: 'GET', path: '/api/initiatives/{initiativeId}/brief-settings', tag: 'Briefs', summary: 'The small-cell threshold and paper size', auth: 'session', response: Settings, status: 200 },
  { method: 'PUT', path: '/api/initiatives/{initiativeId}/brief-settings', tag: 'Briefs', summary: 'Change the small-cell threshold and paper size (analysts)', auth: 'session', body: BriefSettingsBody, response: Settings, status: 200 },
  { method: 'GET', path: '/api/initiatives/{initiativeId}/brief-recipients', tag: 'Briefs', summary: 'The distribution list', auth: 'session', status: 200 },
  { method: 'POST', path: '/api/initiatives/{initiativeId}/brief-recipients', tag: 'Briefs', summary: 'Add a person to the distribution list (analysts)', auth: 'session', body: RecipientBody, response: Created, status: 201 },
  { method: 'DELETE', path: '/api/initiatives/{initiativeId}/brief-recipients/{recipientId}', tag: 'Briefs', summary: 'Take a person off the distribution list (analysts)', auth: 'session', status: 204 },
];
