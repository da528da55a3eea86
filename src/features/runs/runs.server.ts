/**
 * Runs: one execution of the engine on an analysis's pinned extract version. Starting a
 * run snapshots the specification (with its hash), the extract's content hash and the
 * caution shown, and queues its job in the same transaction, so a run never exists
 * without its job. A worker (runWorker.ts → executeRun.ts) executes it as the analyst who
 * started it, reports progress, and stores the full result, or a failure with its reason.
 * A run whose worker died, or whose job is gone, is marked failed by the stale-run sweep,
 * never left running or queued forever.
 */
import { QueryTypes, fn, type Transaction } from 'sequelize';
import { Analysis, ExtractVersion, Run } from '../../../db/models';
import { ENGINE_VERSION } from '@/engine';
import type { AnySpec, Result, Spec } from '@/engine/boundary/schemas';
import { CAUTION_VERSION, cautionText } from '@/lib/cautions';
import { sequelize } from '@/lib/server/db';
import { env } from '@/lib/server/env';
import { AppError, conflict, notFound } from '@/lib/server/errors';
import { logger } from '@/lib/server/logger';
import { recordAudit, type AuditAction } from '../audit/audit.server';
import { specHash } from './canonical';
import type { ReviewState } from '../review/review.schema';
import { enqueueRun, type RunEnqueuer } from './runQueue';
import type { RunStatus } from './runs.schema';
import type { Verification } from './runVerification';
import { cachedResult, keepResult } from './finishedResults';
import { parseStoredResult } from './storedResult';
import { planStanding } from '@/features/planning/planning.server';
import { modifierColumns } from '@/features/analyses/screenSpecs';

export interface Actor {
  id: string;
  clientAddress: string;
}

export { canonicalJson, specHash } from './canonical';
export { columnRoles } from './columnRoles';

/** How a start puts its run's job on the queue (tests pass one that fails). */
export interface StartOptions {
  enqueue?: RunEnqueuer;
}

/**
 * Creates a queued run and puts it on the queue. A run is exploratory unless its modifier
 * was on the initiative's register of prespecified modifiers (not withdrawn) before the
 * pinned extract version was uploaded, or the analysis was declared prespecified before then.
 */
export async function startRun(transaction: Transaction, actor: Actor, analysisId: string, options: StartOptions = {}): Promise<QueuedRun> {
  const analysis = await Analysis.findByPk(analysisId, {
    attributes: ['initiativeId', 'extractVersionId', 'spec', 'prespecifiedAt'],
    include: [{ model: ExtractVersion, as: 'extractVersion', attributes: ['sha256', 'uploadedAt', 'status'], required: true }],
    transaction,
  });
  const version = analysis?.extractVersion;
  if (!analysis || !version) throw notFound('That analysis');
  if (version.status !== 'ready') throw conflict('The pinned extract version is not confirmed.');
  // Planned when the modifier is on the initiative's register from before the data, or the
  // analysis itself was declared prespecified before the version was uploaded.
  // A subgroup screen is planned only when every one of its modifiers is.
  let registered = true;
  for (const modifierColumn of modifierColumns(analysis.spec)) {
    const standing = await planStanding(transaction, {
      initiativeId: analysis.initiativeId, modifierColumn, outcomeColumn: analysis.spec.outcome.column, dataArrivedAt: version.uploadedAt,
    }, null);
    if (standing.status === 'exploratory') registered = false;
  }
  const declared = analysis.prespecifiedAt !== null && new Date(version.uploadedAt) <= new Date(analysis.prespecifiedAt);
  const exploratory = !registered && !declared;
  return queueRun(transaction, actor, {
    analysisId, initiativeId: analysis.initiativeId, extractVersionId: analysis.extractVersionId, extractSha256: version.sha256,
    spec: analysis.spec, exploratory, seed: analysis.spec.ci.seed ?? (analysis.spec.ci.method === 'bootstrap' ? 1 : null), verifiesRunId: null,
  }, 'run.started', { analysisId }, options);
}

/**
 * Queues a re-run that verifies a finished run: the same specification snapshot, extract
 * version and seed, started by the auditor. When it ends, the worker compares the two
 * (runVerification.ts) and stores the comparison on the re-run.
 */
export async function startVerification(transaction: Transaction, actor: Actor, runId: string, options: StartOptions = {}): Promise<QueuedRun> {
  const original = await Run.findByPk(runId, {
    attributes: ['id', 'analysisId', 'initiativeId', 'extractVersionId', 'status', 'spec', 'exploratory', 'seed', 'engineVersion'],
    include: [{ model: ExtractVersion, as: 'extractVersion', attributes: ['sha256'], required: true }],
    transaction,
  });
  if (!original?.extractVersion) throw notFound('That run');
  if (original.status !== 'succeeded') throw conflict('Only a run that finished with results can be re-run to verify it.');
  const seed = seedOf(original.seed === null ? null : String(original.seed));
  return queueRun(transaction, actor, {
    analysisId: original.analysisId, initiativeId: original.initiativeId, extractVersionId: original.extractVersionId,
    extractSha256: original.extractVersion.sha256, spec: original.spec, exploratory: original.exploratory, seed, verifiesRunId: original.id,
  }, 'run.verification-started', { verifiesRunId: original.id, originalEngineVersion: original.engineVersion, seed }, options);
}

export interface QueuedRun {
  runId: string;
}

interface NewRun {
  analysisId: string; initiativeId: string; extractVersionId: string; extractSha256: string; spec: AnySpec; exploratory: boolean;
  seed: number | null; verifiesRunId: string | null;
}

/**
 * Inserts a queued run with its snapshot, hashes and caution, records it as started, and
 * queues its job, all in the caller's transaction. When the queue refuses, the start
 * fails as a whole (the transaction rolls back): no run is left without a job.
 */
async function queueRun(
  transaction: Transaction, actor: Actor, run: NewRun, action: AuditAction, extra: Record<string, unknown>, options: StartOptions,
): Promise<QueuedRun> {
  const hash = specHash(run.spec);
  const caution = cautionText();
  const row = await Run.create(
    {
      analysisId: run.analysisId, initiativeId: run.initiativeId, extractVersionId: run.extractVersionId, status: 'queued', spec: run.spec,
      specHash: hash, extractSha256: run.extractSha256, exploratory: run.exploratory, cautionText: caution, cautionVersion: CAUTION_VERSION,
      startedBy: actor.id, seed: run.seed, verifiesRunId: run.verifiesRunId,
    },
    { transaction },
  );
  await recordAudit(transaction, {
    action, actorId: actor.id, subjectType: 'run', subjectId: row.id, initiativeId: run.initiativeId, clientAddress: actor.clientAddress,
    details: {
      ...extra, extractVersionId: run.extractVersionId, extractSha256: run.extractSha256, specHash: hash, engineVersion: ENGINE_VERSION,
      exploratory: run.exploratory, cautionText: caution, cautionVersion: CAUTION_VERSION,
    },
  });
  try {
    await (options.enqueue ?? enqueueRun)(transaction, { runId: row.id, startedBy: actor.id });
  } catch (error) {
    logger.error({ err: error, runId: row.id }, 'run job could not be queued; the start is rolled back');
    throw new AppError(503, 'queue-unavailable', 'The run could not be queued, so it was not started and nothing was saved. Try again in a moment.');
  }
  return { runId: row.id };
}

/** A bigint seed column as a number (seeds are 32-bit). */
export const seedOf = (seed: string | null): number | null => (seed === null ? null : Number(seed));

/** The re-runs that verified a run, newest first. */
export async function listVerifications(transaction: Transaction, runId: string): Promise<RunView[]> {
  const rows = await sequelize.query<RunRow>(
    `SELECT ${RUN_COLUMNS}, NULL AS result, u.display_name AS starter
       FROM runs r JOIN users u ON u.id = r.started_by WHERE r.verifies_run_id = :id ORDER BY r.queued_at DESC`,
    { replacements: { id: runId }, type: QueryTypes.SELECT, transaction },
  );
  return rows.map(toRunView);
}

export interface RunView {
  id: string;
  analysisId: string;
  initiativeId: string;
  extractVersionId: string;
  status: RunStatus;
  progress: { stage: string; fraction: number };
  spec: Spec;
  specHash: string;
  extractSha256: string;
  engineVersion: string | null;
  seed: number | null;
  exploratory: boolean;
  cautionText: string;
  /** The stored result, read with its schema (parseStoredResult); null when none or not read. */
  result: Result | null;
  error: { code: string; message: string } | null;
  startedBy: { id: string; name: string };
  queuedAt: string;
  startedAt: string | null;
  finishedAt: string | null;
  cancelRequested: boolean;
  /** Set on a re-run that verifies an earlier run: that run's id, and once finished, the comparison. */
  verifiesRunId: string | null;
  verification: Verification | null;
  /** draft, submitted, sent-back or signed-off (its latest review step other than a co-signature). */
  reviewState: ReviewState;
  /** The worker that executed it, as `host:process` (null until one claims it). */
  worker: string | null;
}

interface RunRow {
  id: string; analysis_id: string; initiative_id: string; extract_version_id: string; status: RunStatus;
  progress: RunView['progress']; spec: Spec; spec_hash: string; extract_sha256: string; engine_version: string | null;
  seed: string | null; exploratory: boolean; caution_text: string; result: unknown; error: RunView['error'];
  started_by: string; starter: string; queued_at: Date; started_at: Date | null; finished_at: Date | null; cancel_requested: boolean;
  heartbeat_at: Date | null; verifies_run_id: string | null; verification: Verification | null; review_state: ReviewState;
  worker: string | null;
}

const iso = (d: Date | null) => (d ? new Date(d).toISOString() : null);

function toRunView(r: RunRow): RunView {
  return {
    id: r.id, analysisId: r.analysis_id, initiativeId: r.initiative_id, extractVersionId: r.extract_version_id, status: r.status,
    progress: r.progress, spec: r.spec, specHash: r.spec_hash, extractSha256: r.extract_sha256, engineVersion: r.engine_version,
    seed: seedOf(r.seed), exploratory: r.exploratory, cautionText: r.caution_text, result: parseStoredResult(r.result),
    error: r.error, startedBy: { id: r.started_by, name: r.starter }, queuedAt: iso(r.queued_at) ?? '', startedAt: iso(r.started_at),
    finishedAt: iso(r.finished_at), cancelRequested: r.cancel_requested, verifiesRunId: r.verifies_run_id, verification: r.verification,
    reviewState: r.review_state, worker: r.worker ?? null,
  };
}

/** The run's review state: its latest review step, or draft (src/features/review). */
// Each run's latest review step as a correlated subquery: the run views below are raw SQL for it.
const REVIEW_STATE_COLUMN = `coalesce((SELECT s.kind FROM review_steps s WHERE s.run_id = r.id AND s.kind <> 'co-signed' ORDER BY s.id DESC LIMIT 1), 'draft') AS review_state`;

/** Every column but the result, for listings and progress polling. */
const RUN_COLUMNS = `r.id, r.analysis_id, r.initiative_id, r.extract_version_id, r.status, r.progress, r.spec, r.spec_hash,
  r.extract_sha256, r.engine_version, r.seed, r.exploratory, r.caution_text, r.error, r.started_by, r.queued_at, r.started_at,
  r.finished_at, r.cancel_requested, r.heartbeat_at, r.verifies_run_id, r.verification, r.worker, ${REVIEW_STATE_COLUMN}`;

/**
 * One run, or null when not visible. A run that reads as running but whose worker has
 * stopped reporting, or as queued for longer than the stale timeout, is swept first (marked
 * failed when its worker or its job is gone), so none reads as running or queued forever.
 */
export async function getRun(transaction: Transaction, runId: string, options: { withResult?: boolean } = {}): Promise<RunView | null> {
  // A finished run's result is read and parsed once per process (finishedResults.ts).
  const cached = options.withResult === false ? undefined : cachedResult(runId);
  const columns = options.withResult === false || cached ? `${RUN_COLUMNS}, NULL AS result` : `r.*, ${REVIEW_STATE_COLUMN}`;
  const select = `SELECT ${columns}, u.display_name AS starter FROM runs r JOIN users u ON u.id = r.started_by`;
  const read = async () =>
    (await sequelize.query<RunRow>(`${select} WHERE r.id = :id`, { replacements: { id: runId }, type: QueryTypes.SELECT, transaction }))[0];
  let row = await read();
  if ((row?.status === 'running' && isStale(row.heartbeat_at)) || (row?.status === 'queued' && isStale(row.queued_at))) {
    await sweepStaleRuns(transaction);
    row = await read();
  }
  if (!row) return null;
  const view = toRunView(row);
  if (row.status === 'succeeded' && cached) view.result = cached;
  else if (row.status === 'succeeded' && view.result) keepResult(runId, view.result);
  return view;
}

function isStale(heartbeat: Date | null): boolean {
  return !heartbeat || Date.now() - new Date(heartbeat).getTime() > env.CROSSGRAIN_RUN_STALE_SECONDS * 1000;
}

/** The runs of an analysis, newest first, without their results. */
export async function listRuns(transaction: Transaction, analysisId: string): Promise<RunView[]> {
  await sweepStaleRuns(transaction);
  const rows = await sequelize.query<RunRow>(
    `SELECT ${RUN_COLUMNS}, NULL AS result, u.display_name AS starter
       FROM runs r JOIN users u ON u.id = r.started_by WHERE r.analysis_id = :id ORDER BY r.queued_at DESC`,
    { replacements: { id: analysisId }, type: QueryTypes.SELECT, transaction },
  );
  return rows.map(toRunView);
}

/** Asks for a run to stop. A queued run is cancelled at once; a running one at its next report. */
export async function requestCancel(transaction: Transaction, actor: Actor, runId: string): Promise<RunStatus> {
  const run = await Run.findByPk(runId, { attributes: ['id', 'status', 'initiativeId'], lock: transaction.LOCK.UPDATE, transaction });
  if (!run) throw notFound('That run');
  if (run.status !== 'queued' && run.status !== 'running') return run.status;
  if (run.status === 'queued') {
    await Run.update(
      { status: 'cancelled', cancelRequested: true, finishedAt: fn('now'), error: { code: 'cancelled', message: 'Cancelled before it started.' } },
      { where: { id: runId }, transaction },
    );
    await recordAudit(transaction, { action: 'run.cancelled', actorId: actor.id, subjectType: 'run', subjectId: runId, initiativeId: run.initiativeId, clientAddress: actor.clientAddress });
    return 'cancelled';
  }
  await Run.update({ cancelRequested: true }, { where: { id: runId }, transaction });
  await recordAudit(transaction, { action: 'run.cancel-requested', actorId: actor.id, subjectType: 'run', subjectId: runId, initiativeId: run.initiativeId, clientAddress: actor.clientAddress });
  return 'running';
}

/**
 * Marks as failed the runs whose worker stopped reporting, and the queued runs whose job
 * is gone from the queue (any initiative; policies/rls/008_run_sweep.sql); returns their ids.
 */
export async function sweepStaleRuns(transaction?: Transaction): Promise<string[]> {
  // A row-level-security helper function (it writes across initiatives): raw SQL.
  const rows = await sequelize.query<{ app_fail_stale_runs: string }>('SELECT app_fail_stale_runs(:seconds)', {
    replacements: { seconds: env.CROSSGRAIN_RUN_STALE_SECONDS }, type: QueryTypes.SELECT, transaction,
  });
  return rows.map((r) => r.app_fail_stale_runs);
}
