/**
 * Runs: one execution of the engine on an analysis's pinned extract version. Starting a
 * run snapshots the specification (with its hash), the extract's content hash and the
 * caution shown, and queues a job; a worker executes it as the analyst who started it,
 * reports progress, and stores the full result, or a failure with its reason. A worker
 * that dies leaves its run marked failed by the stale-run sweep, never stuck as running.
 */
import { hostname } from 'node:os';
import { QueryTypes, type Transaction } from 'sequelize';
import { AnalysisCancelledError, ENGINE_VERSION, runAnalysis } from '../../engine';
import type { Spec } from '../../engine/boundary/schemas';
import { CAUTION_VERSION, cautionText } from '../../lib/cautions';
import { sequelize, withIdentity } from '../../lib/server/db';
import { env } from '../../lib/server/env';
import { conflict, notFound } from '../../lib/server/errors';
import { logger } from '../../lib/server/logger';
import { enqueueRun } from '../../lib/server/queue';
import { recordAudit, type AuditAction } from '../audit/audit.server';
import { loadColumns, toEngineData } from '../extracts/extracts.server';
import { specHash } from './canonical';
import type { ReviewState } from '../review/review.schema';
import { compareRuns, verificationSentence, type RunFacts, type Verification } from './runVerification';

export type RunStatus = 'queued' | 'running' | 'succeeded' | 'failed' | 'cancelled';

export interface Actor {
  id: string;
  clientAddress: string;
}

export { canonicalJson, specHash } from './canonical';

/**
 * Creates a queued run and puts it on the queue. A run is exploratory unless the
 * analysis was prespecified before the pinned extract version was uploaded.
 */
export async function startRun(transaction: Transaction, actor: Actor, analysisId: string): Promise<QueuedRun> {
  const [analysis] = await sequelize.query<{
    initiative_id: string; extract_version_id: string; spec: Spec; prespecified_at: Date | null; sha256: string; uploaded_at: Date; status: string;
  }>(
    `SELECT a.initiative_id, a.extract_version_id, a.spec, a.prespecified_at, v.sha256, v.uploaded_at, v.status
       FROM analyses a JOIN extract_versions v ON v.id = a.extract_version_id WHERE a.id = :id`,
    { replacements: { id: analysisId }, type: QueryTypes.SELECT, transaction },
  );
  if (!analysis) throw notFound('That analysis');
  if (analysis.status !== 'ready') throw conflict('The pinned extract version is not confirmed.');
  const exploratory = !analysis.prespecified_at || new Date(analysis.uploaded_at) > new Date(analysis.prespecified_at);
  return queueRun(transaction, actor, {
    analysisId, initiativeId: analysis.initiative_id, extractVersionId: analysis.extract_version_id, extractSha256: analysis.sha256,
    spec: analysis.spec, exploratory, seed: analysis.spec.ci.seed ?? (analysis.spec.ci.method === 'bootstrap' ? 1 : null), verifiesRunId: null,
  }, 'run.started', { analysisId });
}

/**
 * Queues a re-run that verifies a finished run: the same specification snapshot, extract
 * version and seed, started by the auditor. When it ends, the worker compares the two
 * (runVerification.ts) and stores the comparison on the re-run.
 */
export async function startVerification(transaction: Transaction, actor: Actor, runId: string): Promise<QueuedRun> {
  const [original] = await sequelize.query<{
    id: string; analysis_id: string; initiative_id: string; extract_version_id: string; status: RunStatus; spec: Spec;
    exploratory: boolean; seed: string | null; engine_version: string | null; sha256: string;
  }>(
    `SELECT r.id, r.analysis_id, r.initiative_id, r.extract_version_id, r.status, r.spec, r.exploratory, r.seed, r.engine_version, v.sha256
       FROM runs r JOIN extract_versions v ON v.id = r.extract_version_id WHERE r.id = :id`,
    { replacements: { id: runId }, type: QueryTypes.SELECT, transaction },
  );
  if (!original) throw notFound('That run');
  if (original.status !== 'succeeded') throw conflict('Only a run that finished with results can be re-run to verify it.');
  return queueRun(transaction, actor, {
    analysisId: original.analysis_id, initiativeId: original.initiative_id, extractVersionId: original.extract_version_id,
    extractSha256: original.sha256, spec: original.spec, exploratory: original.exploratory, seed: seedOf(original.seed), verifiesRunId: original.id,
  }, 'run.verification-started', { verifiesRunId: original.id, originalEngineVersion: original.engine_version, seed: seedOf(original.seed) });
}

export interface QueuedRun {
  runId: string;
  /** Puts the run on the job queue; call it after the transaction that created it commits. */
  enqueue: () => Promise<void>;
}

interface NewRun {
  analysisId: string; initiativeId: string; extractVersionId: string; extractSha256: string; spec: Spec; exploratory: boolean;
  seed: number | null; verifiesRunId: string | null;
}

/** Inserts a queued run with its snapshot, hashes and caution, and records it as started. */
async function queueRun(transaction: Transaction, actor: Actor, run: NewRun, action: AuditAction, extra: Record<string, unknown>): Promise<QueuedRun> {
  const hash = specHash(run.spec);
  const caution = cautionText();
  const [row] = await sequelize.query<{ id: string }>(
    `INSERT INTO runs (analysis_id, initiative_id, extract_version_id, status, spec, spec_hash, extract_sha256, exploratory,
                       caution_text, caution_version, started_by, seed, verifies_run_id)
     VALUES (:analysisId, :initiativeId, :extractVersionId, 'queued', CAST(:spec AS jsonb), :hash, :extractSha256, :exploratory,
             :caution, :cautionVersion, :actor, :seed, :verifiesRunId)
     RETURNING id`,
    {
      replacements: { ...run, spec: JSON.stringify(run.spec), hash, caution, cautionVersion: CAUTION_VERSION, actor: actor.id },
      type: QueryTypes.SELECT,
      transaction,
    },
  );
  await recordAudit(transaction, {
    action, actorId: actor.id, subjectType: 'run', subjectId: row.id, initiativeId: run.initiativeId, clientAddress: actor.clientAddress,
    details: {
      ...extra, extractVersionId: run.extractVersionId, extractSha256: run.extractSha256, specHash: hash, engineVersion: ENGINE_VERSION,
      exploratory: run.exploratory, cautionText: caution, cautionVersion: CAUTION_VERSION,
    },
  });
  return {
    runId: row.id,
    enqueue: async () => {
      await enqueueRun({ runId: row.id, startedBy: actor.id });
    },
  };
}

/** A bigint seed column as a number (seeds are 32-bit). */
const seedOf = (seed: string | null): number | null => (seed === null ? null : Number(seed));

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
  result: unknown;
  error: { code: string; message: string } | null;
  startedBy: { id: string; name: string };
  queuedAt: string;
  startedAt: string | null;
  finishedAt: string | null;
  cancelRequested: boolean;
  /** Set on a re-run that verifies an earlier run: that run's id, and once finished, the comparison. */
  verifiesRunId: string | null;
  verification: Verification | null;
  /** draft, submitted, sent-back or signed-off (its latest review step). */
  reviewState: ReviewState;
}

interface RunRow {
  id: string; analysis_id: string; initiative_id: string; extract_version_id: string; status: RunStatus;
  progress: RunView['progress']; spec: Spec; spec_hash: string; extract_sha256: string; engine_version: string | null;
  seed: string | null; exploratory: boolean; caution_text: string; result: unknown; error: RunView['error'];
  started_by: string; starter: string; queued_at: Date; started_at: Date | null; finished_at: Date | null; cancel_requested: boolean;
  heartbeat_at: Date | null; verifies_run_id: string | null; verification: Verification | null; review_state: ReviewState;
}

const iso = (d: Date | null) => (d ? new Date(d).toISOString() : null);

function toRunView(r: RunRow): RunView {
  return {
    id: r.id, analysisId: r.analysis_id, initiativeId: r.initiative_id, extractVersionId: r.extract_version_id, status: r.status,
    progress: r.progress, spec: r.spec, specHash: r.spec_hash, extractSha256: r.extract_sha256, engineVersion: r.engine_version,
    seed: seedOf(r.seed), exploratory: r.exploratory, cautionText: r.caution_text, result: r.result,
    error: r.error, startedBy: { id: r.started_by, name: r.starter }, queuedAt: iso(r.queued_at) ?? '', startedAt: iso(r.started_at),
    finishedAt: iso(r.finished_at), cancelRequested: r.cancel_requested, verifiesRunId: r.verifies_run_id, verification: r.verification,
    reviewState: r.review_state,
  };
}

/** The run's review state: its latest review step, or draft (src/features/review). */
const REVIEW_STATE_COLUMN = `coalesce((SELECT s.kind FROM review_steps s WHERE s.run_id = r.id ORDER BY s.id DESC LIMIT 1), 'draft') AS review_state`;

/** Every column but the result, for listings and progress polling. */
const RUN_COLUMNS = `r.id, r.analysis_id, r.initiative_id, r.extract_version_id, r.status, r.progress, r.spec, r.spec_hash,
  r.extract_sha256, r.engine_version, r.seed, r.exploratory, r.caution_text, r.error, r.started_by, r.queued_at, r.started_at,
  r.finished_at, r.cancel_requested, r.heartbeat_at, r.verifies_run_id, r.verification, ${REVIEW_STATE_COLUMN}`;

/**
 * One run, or null when not visible. A run that reads as running but whose worker has
 * stopped reporting is swept (marked failed) first, so none reads as running forever.
 */
export async function getRun(transaction: Transaction, runId: string, options: { withResult?: boolean } = {}): Promise<RunView | null> {
  const columns = options.withResult === false ? `${RUN_COLUMNS}, NULL AS result` : `r.*, ${REVIEW_STATE_COLUMN}`;
  const select = `SELECT ${columns}, u.display_name AS starter FROM runs r JOIN users u ON u.id = r.started_by`;
  const read = async () =>
    (await sequelize.query<RunRow>(`${select} WHERE r.id = :id`, { replacements: { id: runId }, type: QueryTypes.SELECT, transaction }))[0];
  let row = await read();
  if (row?.status === 'running' && isStale(row.heartbeat_at)) {
    await sweepStaleRuns(transaction);
    row = await read();
  }
  return row ? toRunView(row) : null;
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
  const [run] = await sequelize.query<{ status: RunStatus; initiative_id: string }>(
    'SELECT status, initiative_id FROM runs WHERE id = :id FOR UPDATE', { replacements: { id: runId }, type: QueryTypes.SELECT, transaction },
  );
  if (!run) throw notFound('That run');
  if (run.status !== 'queued' && run.status !== 'running') return run.status;
  if (run.status === 'queued') {
    await sequelize.query(
      `UPDATE runs SET status = 'cancelled', cancel_requested = true, finished_at = now(),
              error = CAST(:error AS jsonb) WHERE id = :id`,
      { replacements: { id: runId, error: JSON.stringify({ code: 'cancelled', message: 'Cancelled before it started.' }) }, transaction },
    );
    await recordAudit(transaction, { action: 'run.cancelled', actorId: actor.id, subjectType: 'run', subjectId: runId, initiativeId: run.initiative_id, clientAddress: actor.clientAddress });
    return 'cancelled';
  }
  await sequelize.query('UPDATE runs SET cancel_requested = true WHERE id = :id', { replacements: { id: runId }, transaction });
  await recordAudit(transaction, { action: 'run.cancel-requested', actorId: actor.id, subjectType: 'run', subjectId: runId, initiativeId: run.initiative_id, clientAddress: actor.clientAddress });
  return 'running';
}

/** Marks runs whose worker stopped reporting as failed (any initiative); returns their ids. */
export async function sweepStaleRuns(transaction?: Transaction): Promise<string[]> {
  const rows = await sequelize.query<{ app_fail_stale_runs: string }>('SELECT app_fail_stale_runs(:seconds)', {
    replacements: { seconds: env.CROSSGRAIN_RUN_STALE_SECONDS }, type: QueryTypes.SELECT, transaction,
  });
  return rows.map((r) => r.app_fail_stale_runs);
}

/** The roles the engine needs for each column a specification uses. */
export function columnRoles(spec: Spec): Record<string, 'categorical' | 'continuous'> {
  const roles: Record<string, 'categorical' | 'continuous'> = {
    [spec.outcome.column]: spec.outcome.event !== undefined ? 'categorical' : 'continuous',
    [spec.exposure.column]: 'categorical',
    [spec.modifier.column]: spec.modifier.type,
  };
  for (const covariate of spec.covariates) roles[covariate.column] = covariate.type;
  return roles;
}

/** Compares a finished verification re-run with the run it verifies, and records the outcome. */
async function storeVerification(transaction: Transaction, rerunId: string, originalId: string, actorId: string, rerun: RunFacts): Promise<void> {
  const [original] = await sequelize.query<{ initiative_id: string; extract_sha256: string; spec_hash: string; engine_version: string | null; seed: string | null; result: unknown }>(
    'SELECT initiative_id, extract_sha256, spec_hash, engine_version, seed, result FROM runs WHERE id = :id',
    { replacements: { id: originalId }, type: QueryTypes.SELECT, transaction },
  );
  if (!original) return;
  const verification = compareRuns(
    { extractSha256: original.extract_sha256, specHash: original.spec_hash, engineVersion: original.engine_version, seed: seedOf(original.seed), result: original.result },
    rerun,
  );
  const resultCheck = verification.checks.find((check) => check.name === 'result');
  await sequelize.query('UPDATE runs SET verification = CAST(:verification AS jsonb) WHERE id = :id', {
    replacements: { id: rerunId, verification: JSON.stringify(verification) }, transaction,
  });
  await recordAudit(transaction, {
    action: 'run.verified', actorId, subjectType: 'run', subjectId: originalId, initiativeId: original.initiative_id,
    details: {
      rerunId, reproduced: verification.reproduced, summary: verificationSentence(verification),
      resultSha256: resultCheck?.original, rerunResultSha256: resultCheck?.rerun,
      differenceCount: verification.differenceCount,
    },
  });
}

const HEARTBEAT_MS = 2_000;
const PROGRESS_WRITE_MS = 400;

/**
 * Executes one run, as the worker does for each job: claim it, load its columns, run the
 * engine with progress and cancellation, and store the outcome with its audit event.
 */
export async function executeRun(runId: string, startedBy: string, options: { workerName?: string; threads?: number } = {}): Promise<RunStatus> {
  const worker = options.workerName ?? `${hostname()}:${process.pid}`;
  const claimed = await withIdentity(startedBy, async (t) => {
    // Read under the starter's identity: row-level security confirms they may still run it.
    // Analysts execute their runs; auditors only the re-runs that verify a past run.
    const [run] = await sequelize.query<{
      status: RunStatus; initiative_id: string; spec: Spec; extract_version_id: string; spec_hash: string; extract_sha256: string;
      caution_text: string; seed: string | null; verifies_run_id: string | null;
    }>(
      `SELECT status, initiative_id, spec, extract_version_id, spec_hash, extract_sha256, caution_text, seed, verifies_run_id FROM runs
        WHERE id = :id AND started_by = :startedBy
          AND (initiative_id IN (SELECT app_analyst_initiative_ids())
               OR (verifies_run_id IS NOT NULL AND initiative_id IN (SELECT app_auditor_initiative_ids())))
        FOR UPDATE`,
      { replacements: { id: runId, startedBy }, type: QueryTypes.SELECT, transaction: t },
    );
    if (!run || run.status !== 'queued') return null;
    await sequelize.query(
      `UPDATE runs SET status = 'running', started_at = now(), heartbeat_at = now(), worker = :worker,
              progress = '{"stage": "loading", "fraction": 0}'::jsonb WHERE id = :id`,
      { replacements: { id: runId, worker }, transaction: t },
    );
    return run;
  });
  if (!claimed) return 'cancelled';

  const controller = new AbortController();
  let lastProgress = { stage: 'loading', fraction: 0 };
  let writing = false;
  const report = async () => {
    if (writing) return;
    writing = true;
    try {
      const [state] = await withIdentity(startedBy, (t) =>
        sequelize.query<{ cancel_requested: boolean; status: string }>(
          `UPDATE runs SET heartbeat_at = now(), progress = CAST(:progress AS jsonb) WHERE id = :id AND status = 'running'
           RETURNING cancel_requested, status`,
          { replacements: { id: runId, progress: JSON.stringify(lastProgress) }, type: QueryTypes.SELECT, transaction: t },
        ),
      );
      if (!state || state.cancel_requested) controller.abort();
    } catch (error) {
      logger.warn({ err: error, runId }, 'progress report failed');
    } finally {
      writing = false;
    }
  };
  const heartbeat = setInterval(() => void report(), HEARTBEAT_MS);
  let lastWrite = 0;

  const finish = async (status: RunStatus, fields: { result?: unknown; error?: { code: string; message: string }; seed?: number | null }) => {
    clearInterval(heartbeat);
    await withIdentity(startedBy, async (t) => {
      const [updated] = await sequelize.query<{ id: string }>(
        `UPDATE runs SET status = :status, finished_at = now(), heartbeat_at = now(), engine_version = :engineVersion,
                result = CAST(:result AS jsonb), error = CAST(:error AS jsonb), seed = coalesce(:seed, seed),
                progress = CAST(:progress AS jsonb)
          WHERE id = :id AND status = 'running' RETURNING id`,
        {
          replacements: {
            id: runId, status, engineVersion: ENGINE_VERSION,
            result: fields.result === undefined ? null : JSON.stringify(fields.result),
            error: fields.error ? JSON.stringify(fields.error) : null, seed: fields.seed ?? null,
            progress: JSON.stringify({ stage: status === 'succeeded' ? 'done' : status, fraction: status === 'succeeded' ? 1 : lastProgress.fraction }),
          },
          type: QueryTypes.SELECT,
          transaction: t,
        },
      );
      // Already swept as failed (the worker was presumed dead): leave that record as it is.
      if (!updated) return;
      await recordAudit(t, {
        action: status === 'succeeded' ? 'run.finished' : status === 'cancelled' ? 'run.cancelled' : 'run.failed',
        actorId: startedBy, subjectType: 'run', subjectId: runId, initiativeId: claimed.initiative_id,
        details: {
          extractSha256: claimed.extract_sha256, specHash: claimed.spec_hash, engineVersion: ENGINE_VERSION, worker,
          cautionText: claimed.caution_text, seed: fields.seed ?? null, error: fields.error ?? null,
        },
      });
      if (status === 'succeeded' && claimed.verifies_run_id) {
        await storeVerification(t, runId, claimed.verifies_run_id, startedBy, {
          extractSha256: claimed.extract_sha256, specHash: claimed.spec_hash, engineVersion: ENGINE_VERSION,
          seed: fields.seed ?? seedOf(claimed.seed),
          // Compared as stored: the same JSON round trip the original's result went through.
          result: JSON.parse(JSON.stringify(fields.result)),
        });
      }
    });
    return status;
  };

  try {
    const roles = columnRoles(claimed.spec);
    const loaded = await withIdentity(startedBy, (t) => loadColumns(t, claimed.extract_version_id, Object.keys(roles)));
    const data = toEngineData(loaded.rowCount, loaded.columns, roles, loaded.missingValues);
    const result = await runAnalysis(data, claimed.spec as never, {
      signal: controller.signal,
      threads: options.threads ?? env.CROSSGRAIN_ENGINE_THREADS,
      onProgress: (event) => {
        lastProgress = { stage: event.stage, fraction: event.fraction };
        if (Date.now() - lastWrite > PROGRESS_WRITE_MS) {
          lastWrite = Date.now();
          void report();
        }
      },
    });
    return await finish('succeeded', { result, seed: (result as { seed?: number | null }).seed ?? null });
  } catch (error) {
    if (error instanceof AnalysisCancelledError || controller.signal.aborted) {
      return finish('cancelled', { error: { code: 'cancelled', message: 'Cancelled while running. Nothing partial was kept.' } });
    }
    const code = (error as { code?: string }).code ?? 'engine-error';
    const message = error instanceof Error ? error.message : 'The engine stopped with an unexpected error.';
    logger.warn({ runId, code }, 'run failed');
    return finish('failed', { error: { code, message } });
  }
}
