/**
 * The catalogue of every JSON endpoint, from which /api/openapi.json is generated. Each
 * entry points at the same zod schemas that the endpoint validates with, so the document
 * cannot describe a body the server would not accept. A test walks src/pages/api and
 * fails when a route or method is missing here, or listed here but absent.
 */
import { z, type ZodType } from 'zod';
import {
  CreateInitiativeBody, InitiativeItem, InviteUserBody, SetMembershipBody, UpdateInitiativeBody, UpdateUserBody, UserListItem,
} from '../admin/admin.schema';
import { ApiTokenView, CreateApiTokenBody, CreatedApiToken, ForgotPasswordBody, MeResponse, SetPasswordBody, SignInBody } from '../auth/auth.schema';
import { ArchiveBody, ConfirmVersionBody, NewExtractQuery, NewVersionQuery, RowsQuery, UploadAccepted } from '../extracts/extracts.schema';
import { AnalysisBody, Created, DownloadQuery, RunAccepted } from '../analyses/analysisApi.schema';
import { AuditCheckpoint, AuditEventPage, AuditEventsQuery, AuditExportQuery, ChainReport, CheckpointQuery, VerifyBody } from '../audit/audit.schema';
import { BoardView, CommentBody, DecisionBody, ReviewView, SubmitBody } from '../review/review.schema';
import { OutboxQuery } from '../admin/outbox';
import { BRIEF_OPERATIONS } from './briefOperations';
import { NOTIFICATION_OPERATIONS } from './notificationOperations';
import { PLAN_OPERATIONS } from './planOperations';
import { CREDIBILITY_OPERATIONS } from './credibilityOperations';
import type { Operation } from './operation';

export type { Auth, Operation } from './operation';

const HealthResponse = z
  .object({ status: z.enum(['ok', 'degraded']), version: z.string(), database: z.enum(['up', 'down']) })
  .meta({ id: 'Health' });

const InvitedResponse = z.object({ userId: z.uuid(), mailed: z.boolean() }).meta({ id: 'Invited' });
const Member = z
  .object({
    membershipId: z.uuid(), userId: z.uuid(), email: z.string(), displayName: z.string(), status: z.string(),
    role: z.enum(['analyst', 'clinician', 'auditor']),
  })
  .meta({ id: 'Member' });

export const OPERATIONS: Operation[] = [
  { method: 'GET', path: '/api/health', tag: 'Service', summary: 'Version and database state', auth: 'none', response: HealthResponse, status: 200 },

  { method: 'POST', path: '/api/auth/sign-in', tag: 'Sessions', summary: 'Sign in and receive the session cookie', auth: 'none', body: SignInBody, status: 204,
    description: 'Refusals answer 401 with code `sign-in-refused` whatever the reason; past the throttling limit, 429 with Retry-After.' },
  { method: 'POST', path: '/api/auth/sign-out', tag: 'Sessions', summary: 'End the current session', auth: 'none', status: 204 },
  { method: 'POST', path: '/api/auth/forgot-password', tag: 'Sessions', summary: 'E-mail a password-reset link (always 202)', auth: 'none', body: ForgotPasswordBody, status: 202 },
  { method: 'POST', path: '/api/auth/reset-password', tag: 'Sessions', summary: 'Set a new password from a reset link', auth: 'none', body: SetPasswordBody, status: 204 },
  { method: 'POST', path: '/api/auth/accept-invitation', tag: 'Sessions', summary: 'Set a password from an invitation and sign in', auth: 'none', body: SetPasswordBody, status: 204 },

  { method: 'GET', path: '/api/me', tag: 'Me', summary: 'The signed-in user and their memberships', auth: 'session', response: MeResponse, status: 200 },
  { method: 'GET', path: '/api/me/tokens', tag: 'Me', summary: 'Your personal API tokens (never their secrets)', auth: 'session', response: z.array(ApiTokenView), status: 200 },
  { method: 'POST', path: '/api/me/tokens', tag: 'Me', summary: 'Create a personal API token; the secret is returned once', auth: 'session', body: CreateApiTokenBody, response: CreatedApiToken, status: 201,
    description: 'Needs a signed-in session: a token cannot create further tokens.' },
  { method: 'DELETE', path: '/api/me/tokens/{id}', tag: 'Me', summary: 'Revoke one of your tokens', auth: 'session', status: 204 },

  { method: 'GET', path: '/api/admin/users', tag: 'Administration', summary: 'Every account with its memberships', auth: 'admin', response: z.array(UserListItem), status: 200 },
  { method: 'POST', path: '/api/admin/users', tag: 'Administration', summary: 'Invite a person by e-mail', auth: 'admin', body: InviteUserBody, response: InvitedResponse, status: 201 },
  { method: 'PATCH', path: '/api/admin/users/{id}', tag: 'Administration', summary: 'Deactivate or reactivate an account', auth: 'admin', body: UpdateUserBody, status: 204,
    description: 'Deactivation ends every session of the account at once.' },
  { method: 'POST', path: '/api/admin/users/{id}/invitation', tag: 'Administration', summary: 'Send a new invitation link', auth: 'admin', response: InvitedResponse, status: 200,
    description: 'For a person who never set a password. The earlier link stops working at once; after a revocation this invites the person again.' },
  { method: 'DELETE', path: '/api/admin/users/{id}/invitation', tag: 'Administration', summary: 'Revoke an open invitation', auth: 'admin', status: 204,
    description: 'The link stops working and the person stays on the list as "invitation revoked" (a deactivated account that never had a password), so the audit trail still names them. 409 when already accepted or revoked.' },
  { method: 'GET', path: '/api/admin/initiatives', tag: 'Administration', summary: 'Every initiative', auth: 'admin', response: z.array(InitiativeItem), status: 200 },
  { method: 'POST', path: '/api/admin/initiatives', tag: 'Administration', summary: 'Create an initiative', auth: 'admin', body: CreateInitiativeBody, response: InitiativeItem, status: 201 },
  { method: 'PATCH', path: '/api/admin/initiatives/{id}', tag: 'Administration', summary: 'Change the description, the row-preview setting or the sign-offs a run needs', auth: 'admin', body: UpdateInitiativeBody, status: 204,
    description: '`requiredSignOffs` is a whole number from 1 to 5 (400 otherwise, changing nothing): how many distinct clinicians must sign a run off. Audited as `initiative.updated` with the previous value.' },
  { method: 'GET', path: '/api/admin/initiatives/{id}/members', tag: 'Administration', summary: 'The members of an initiative', auth: 'admin', response: z.array(Member), status: 200 },
  { method: 'PUT', path: '/api/admin/initiatives/{id}/members', tag: 'Administration', summary: 'Add a person with a role, or change their role', auth: 'admin', body: SetMembershipBody, status: 204 },
  { method: 'DELETE', path: '/api/admin/initiatives/{id}/members/{userId}', tag: 'Administration', summary: 'Remove a person from an initiative', auth: 'admin', status: 204 },
  { method: 'GET', path: '/api/admin/outbox', tag: 'Administration', summary: 'Messages kept by the local mail server (local mail mode only)', auth: 'admin', query: OutboxQuery, status: 200 },
  { method: 'GET', path: '/api/admin/outbox/{id}', tag: 'Administration', summary: 'One message as the recipient sees it (local mail mode only)', auth: 'admin', status: 200 },

  { method: 'GET', path: '/api/initiatives/{initiativeId}/extracts', tag: 'Extracts', summary: "The initiative's extracts", auth: 'session', status: 200 },
  { method: 'POST', path: '/api/initiatives/{initiativeId}/extracts', tag: 'Extracts', summary: 'Upload a new extract (CSV as the raw body or a multipart file)', auth: 'session',
    query: NewExtractQuery, body: z.string().describe('The CSV file: header row, comma, semicolon or tab delimited, UTF-8.'), bodyType: 'text/csv', response: UploadAccepted, status: 202,
    description: 'Analysts. Refused at once (413, 415, 422 with the first bad line) when the file is not an acceptable CSV; the identifier screen, profile and storage run after the 202: poll GET /api/extracts/{extractId}. `drop=col,col` leaves columns out while reading, so their values are never stored. `keep=COLUMN` (repeat it per column) with `keepReason=TEXT` (or the same as multipart fields) keeps a column the screen flagged by its name alone, when its values match no identifier pattern; the reason, the uploader and the rule are stored with the version and audited. A column with a value-based finding (phone numbers, full dates, e-mail addresses, ages over 89, near-unique codes) is refused again with the same message; `keep` naming a column that was not flagged, or `keep` without a reason, is a 400 that changes nothing.' },
  { method: 'GET', path: '/api/extracts/{extractId}', tag: 'Extracts', summary: 'The extract and the status of each version (processing, needs-review, ready, refused, failed)', auth: 'session', status: 200 },
  { method: 'POST', path: '/api/extracts/{extractId}/versions', tag: 'Extracts', summary: 'Upload version n+1 of an extract', auth: 'session',
    query: NewVersionQuery, body: z.string(), bodyType: 'text/csv', response: UploadAccepted, status: 202,
    description: 'Analysts. The same as a new extract: `drop`, `keep` and `keepReason` work as there.' },
  { method: 'POST', path: '/api/extracts/{extractId}/versions/{versionId}/confirm', tag: 'Extracts', summary: 'Sign the attestation and confirm the data dictionary; the version becomes ready', auth: 'session',
    body: ConfirmVersionBody, status: 204 },
  { method: 'POST', path: '/api/extracts/{extractId}/versions/{versionId}/cancel', tag: 'Extracts', summary: 'Cancel an upload that is still being processed', auth: 'session', status: 200 },
  { method: 'GET', path: '/api/extracts/{extractId}/versions/{versionId}/file', tag: 'Extracts', summary: 'The uploaded file, byte for byte (audited; for those who may preview rows)', auth: 'session', status: 200,
    description: 'Served as an attachment with nosniff; its SHA-256 is the version\'s. Every download is an audit event (extract.file-downloaded).' },
  { method: 'GET', path: '/api/extracts/{extractId}/versions/{versionId}/rows', tag: 'Extracts', summary: 'One page of rows, sorted on the server (audited)', auth: 'session', query: RowsQuery, status: 200,
    description: 'Analysts; clinicians and auditors only where the initiative allows row previews.' },
  { method: 'POST', path: '/api/extracts/{extractId}/archive', tag: 'Extracts', summary: 'Archive (hide from new analyses) or restore an extract', auth: 'session', body: ArchiveBody, status: 204 },

  { method: 'GET', path: '/api/initiatives/{initiativeId}/analyses', tag: 'Analyses and runs', summary: "The initiative's analyses", auth: 'session', status: 200 },
  { method: 'POST', path: '/api/analyses', tag: 'Analyses and runs', summary: 'Create an analysis pinned to one confirmed extract version', auth: 'session',
    body: AnalysisBody, response: Created, status: 201, description: 'Analysts. `spec` is the engine specification (see spec.schema.json); 422 names the field when a column or level does not fit.' },
  { method: 'GET', path: '/api/analyses/{id}', tag: 'Analyses and runs', summary: 'One analysis with its specification and latest run', auth: 'session', status: 200 },
  { method: 'PATCH', path: '/api/analyses/{id}', tag: 'Analyses and runs', summary: 'Change an analysis; past runs keep their snapshot', auth: 'session', body: AnalysisBody, status: 204 },
  { method: 'GET', path: '/api/runs/compare', tag: 'Analyses and runs', summary: 'Compare two to four runs', auth: 'session', status: 200,
    query: z.object({ runs: z.string().describe('Two to four run ids, comma-separated (400 beyond four).') }),
    description: 'The differing specification fields in words, warnings when runs use different references, and every figure the runs estimated with each run’s change from the first. A subgroup screen is refused with 400 (`screen-not-comparable`): compare the runs of the full analysis of a modifier instead.' },
  { method: 'GET', path: '/api/analyses/{id}/runs', tag: 'Analyses and runs', summary: "The analysis's runs, newest first", auth: 'session', status: 200 },
  { method: 'POST', path: '/api/analyses/{id}/runs', tag: 'Analyses and runs', summary: 'Queue a run of the analysis', auth: 'session', response: RunAccepted, status: 202,
    description: 'With an Idempotency-Key header, a repeat of the same request (same person, analysis, key and body) within 24 hours answers with the run the first one queued instead of queuing another. The same key with a different body is refused with 422 (`idempotency-key-reused`).',
    headers: [{ name: 'Idempotency-Key', description: 'A fresh value (such as a UUID) for each run you mean to start; 1 to 200 visible ASCII characters. Kept for 24 hours.' }] },
  { method: 'GET', path: '/api/runs/{runId}', tag: 'Analyses and runs', summary: 'A run: status (queued, running, succeeded, failed, cancelled), progress and the engine result', auth: 'session', status: 200,
    description: '`result` follows the engine result schema (result.schema.json); a result stored by an earlier engine carries null in the fields it did not record yet. `?fields=status` leaves it out, for polling. `worker` names the worker that executed the run (`host:process`; null until one takes it).' },
  { method: 'POST', path: '/api/runs/{runId}/verify', tag: 'Analyses and runs', summary: 'Re-run a finished run to check that it reproduces bit for bit', auth: 'session', response: RunAccepted, status: 202,
    description: 'Auditors of the initiative. The re-run uses the run\'s own specification snapshot, extract version and seed; once it ends, `GET /api/runs/{runId}` of the re-run carries `verification` (each input compared, the result digests, the first differing values). Audited as `run.verification-started` and `run.verified`.' },
  { method: 'POST', path: '/api/runs/{runId}/cancel', tag: 'Analyses and runs', summary: 'Cancel a queued or running run', auth: 'session', status: 200 },
  { method: 'GET', path: '/api/runs/{runId}/plot-data', tag: 'Analyses and runs', summary: 'The plots\' input for a finished run (an entity tag; ask again with If-None-Match for a 304)', auth: 'session', status: 200,
    description: 'Sent with Cache-Control: private, no-cache, so every view checks the reader\'s access before the browser reuses its copy. 404 for a run without a result.' },
  { method: 'GET', path: '/api/runs/{runId}/download', tag: 'Analyses and runs', summary: 'The result as JSON or the tables as CSV (audited)', auth: 'session', query: DownloadQuery, status: 200 },

  { method: 'GET', path: '/api/runs/{runId}/review', tag: 'Review', summary: "A run's review: its state, steps and comments", auth: 'session', response: ReviewView, status: 200,
    description: 'Every member of the initiative. `state` is `draft`, `submitted`, `sent-back` or `signed-off` (the latest step other than a co-signature). `signOffs` gives the sign-offs the initiative requires from distinct clinicians and how many signed since the latest submission, e.g. 1 of 2; a signature short of the required number is a `co-signed` step and leaves the run `submitted`. A decision step carries its signature: `meaning` (what the signer said it means) and `resultDigest` (SHA-256 of the canonical result it signed, the digest a verifying re-run compares); both are null on submissions.' },
  { method: 'POST', path: '/api/runs/{runId}/review/submit', tag: 'Review', summary: 'Submit a finished run for review (analysts)', auth: 'session', body: SubmitBody, response: ReviewView, status: 200,
    description: 'From `draft` or `sent-back` only (409 otherwise). Audited as `review.submitted`.' },
  { method: 'POST', path: '/api/runs/{runId}/review/decision', tag: 'Review', summary: 'Sign a submitted run off or send it back (clinicians)', auth: 'session', body: DecisionBody, response: ReviewView, status: 200,
    description: 'An electronic signature: `password` (the signer\'s own, entered again) and `meaning` (one of ours, such as "approved for an internal brief", "reviewed, no objection" or "returned for changes", or the signer\'s own words) are required. Only from a browser session: an API token gets 403. A wrong password gets 403 `signature-refused`, records no step and counts toward sign-in throttling (429 with Retry-After past the limit). Never on a run the clinician started (403). Sending back needs a note and ends the round. When the initiative requires several sign-offs, each clinician signs once per submission (409 on a second signature) and the last one required makes the run `signed-off`. The step is bound to the result\'s digest. Audited as `review.co-signed`, `review.signed-off` or `review.sent-back` with the meaning and digest; a refused password as `review.signature-refused`.' },
  { method: 'POST', path: '/api/runs/{runId}/comments', tag: 'Review', summary: 'Comment on a run, or reply to a comment', auth: 'session', body: CommentBody, response: Created, status: 201,
    description: 'Analysts and clinicians of the initiative; auditors read only. Audited as `review.commented` (ids and length, not the text).' },
  { method: 'GET', path: '/api/initiatives/{initiativeId}/board', tag: 'Review', summary: 'Every analysis under the state of its review', auth: 'session', response: BoardView, status: 200 },

  { method: 'POST', path: '/api/audit/verify', tag: 'Audit', summary: 'Recompute the hash chain and report the first broken link', auth: 'session', body: VerifyBody, response: ChainReport, status: 200,
    description: 'Auditors and administrators. Send `{}` to check the chain alone, or `{ "checkpoint": … }` with a file from `GET /api/audit/checkpoint` to check also that the chain still holds that head unchanged (removed newest events show only this way). The check itself is an audit event.' },
  { method: 'GET', path: '/api/admin/audit-events', tag: 'Audit', summary: 'One page of the events outside any initiative (sign-ins, accounts, tokens)', auth: 'admin', query: AuditEventsQuery, response: AuditEventPage, status: 200 },
  { method: 'GET', path: '/api/admin/audit-events/export', tag: 'Audit', summary: 'Those events as CSV or JSON, caution first (audited)', auth: 'admin', query: AuditExportQuery, status: 200 },
  { method: 'GET', path: '/api/initiatives/{initiativeId}/audit-events', tag: 'Audit', summary: "One page of the initiative's audit trail, newest first", auth: 'session', query: AuditEventsQuery, response: AuditEventPage, status: 200,
    description: 'Auditors of the initiative. `action` takes an area (`run`) or one action (`run.finished`); `from` and `to` are UTC dates, both included.' },
  { method: 'GET', path: '/api/initiatives/{initiativeId}/audit-events/export', tag: 'Audit', summary: 'Every matching event as CSV or JSON, caution first (audited)', auth: 'session', query: AuditExportQuery, status: 200,
    description: 'Auditors of the initiative. Same filters as the list; events in chain order with their positions and hashes.' },
  { method: 'GET', path: '/api/audit/checkpoint', tag: 'Audit', summary: 'Export a checkpoint of the chain head, to keep outside the database', auth: 'session', query: CheckpointQuery, response: AuditCheckpoint, status: 200,
    description: 'Auditors and administrators. `download=1` answers as a file. The export is an audit event written after the head was read.' },

  // Briefs
  ...BRIEF_OPERATIONS,
  ...NOTIFICATION_OPERATIONS,
  ...PLAN_OPERATIONS,
  ...CREDIBILITY_OPERATIONS,
];
