/**
 * Executes one run, as the worker does for each job: claim it, load its data through the
 * runs area's loader (runInputs.ts), run the engine with progress and cancellation, and
 * store the outcome with its audit event. A failure is stored in the product's words
 * (runFailure.ts); an unexpected error is logged with its stack, never shown as it is.
 */
import { hostname } from 'node:os';
import { QueryTypes, fn, type Transaction } from 'sequelize';
import { Run } from '../../../db/models';
import { AnalysisCancelledError, ENGINE_VERSION, runAnalysis } from '@/engine';
import type { Spec } from '@/engine/boundary/schemas';
import { sequelize, withIdentity } from '@/lib/server/db';
import { env } from '@/lib/server/env';
import { logger } from '@/lib/server/logger';
import { recordAudit } from '../audit/audit.server';
import { loadPersonTimeUnit, loadRunData } from './runInputs';
import { isRefusal, runFailure } from './runFailure';
import type { RunStatus } from './runs.schema';
import { seedOf } from './runs.server';
import { compareRuns, verificationSentence, type RunFacts } from './runVerification';

/** Compares a finished verification re-run with the run it verifies, and records the outcome. */
async function storeVerification(transaction: Transaction, rerunId: string, originalId: string, actorId: string, rerun: RunFacts): Promise<void> {
  const original = await Run.findByPk(originalId, {
    attributes: ['initiativeId', 'extractSha256', 'specHash', 'engineVersion', 'seed', 'result'], raw: true, transaction,
  });
  if (!original) return;
  const verification = compareRuns(
    {
      extractSha256: original.extractSha256, specHash: original.specHash, engineVersion: original.engineVersion,
      seed: seedOf(original.seed === null ? null : String(original.seed)), result: original.result,
    },
    rerun,
  );
  const resultCheck = verification.checks.find((check) => check.name === 'result');
  await Run.update({ verification: { ...verification } }, { where: { id: rerunId }, transaction });
  await recordAudit(transaction, {
    action: 'run.verified', actorId, subjectType: 'run', subjectId: originalId, initiativeId: original.initiativeId,
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
 * Executes one run; returns how it ended, or 'not-queued' when there was nothing to do: the
 * run was no longer queued (cancelled before it started, executed already, taken by another
 * worker) or its starter may no longer run it.
 */
export async function executeRun(runId: string, startedBy: string, options: { workerName?: string; threads?: number } = {}): Promise<RunStatus | 'not-queued'> {
  const worker = options.workerName ?? `${hostname()}:${process.pid}`;
  const claimed = await withIdentity(startedBy, async (t) => {
    // Read under the starter's identity: row-level security confirms they may still run it.
    // Analysts execute their runs; auditors only the re-runs that verify a past run.
    // The policy's own helper functions in a locking read: raw SQL.
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
    await Run.update(
      { status: 'running', startedAt: fn('now'), heartbeatAt: fn('now'), worker, progress: { stage: 'loading', fraction: 0 } },
      { where: { id: runId }, transaction: t },
    );
    return run;
  });
  if (!claimed) return 'not-queued';

  const controller = new AbortController();
  let lastProgress = { stage: 'loading', fraction: 0 };
  let writing = false;
  const report = async () => {
    if (writing) return;
    writing = true;
    try {
      const [, [state]] = await withIdentity(startedBy, (t) =>
        Run.update(
          { heartbeatAt: fn('now'), progress: lastProgress },
          { where: { id: runId, status: 'running' }, returning: true, transaction: t },
        ),
      );
      if (!state || state.cancelRequested) controller.abort();
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
      // A compare-and-set on a still-running run that writes the engine's result as it came: raw SQL.
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
    const data = await loadRunData(startedBy, claimed.extract_version_id, claimed.spec);
    const personTimeUnit = await loadPersonTimeUnit(startedBy, claimed.extract_version_id, claimed.spec);
    const result = await runAnalysis(data, claimed.spec, {
      personTimeUnit,
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
    const failure = runFailure(error, runId);
    if (isRefusal(failure)) logger.info({ runId, code: failure.code }, 'run refused by the engine');
    else logger.error({ err: error, runId }, 'run failed on an unexpected error');
    return finish('failed', { error: failure });
  }
}
