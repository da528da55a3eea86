/**
 * The run lifecycle's two guarantees: a run and its queued job are written together (a
 * start whose job cannot be queued leaves nothing behind, and tells the client so), and
 * no run is left queued forever when its job is gone. Also: what a failed run shows is in
 * the product's words, never a raw internal message.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { QueryTypes } from 'sequelize';
import type { Spec } from '@/engine/boundary/schemas';
import { createAnalysis } from '@/features/analyses/analyses.server';
import { CALL_BACK_DEMO_SPEC } from '@/features/analyses/demoSpecs';
import { generateCallBackCohort } from '@/features/extracts/demoCohorts';
import { executeRun } from '@/features/runs/executeRun';
import { RUN_QUEUE } from '@/features/runs/runQueue';
import { getRun, startRun, type StartOptions } from '@/features/runs/runs.server';
import { withIdentity } from '@/lib/server/db';
import { AppError } from '@/lib/server/errors';
import { makeReadyExtract } from '../support/extractFactory';
import { addMember, closeOwnerDb, makeInitiative, makeUser, ownerDb } from '../support/factories';

let analystId: string;
let initiativeId: string;
let versionId: string;

/** The demo call-back analysis with one covariate. */
const spec: Spec = { ...CALL_BACK_DEMO_SPEC, covariates: [{ column: 'comorbidity_score', type: 'continuous' }] };

beforeAll(async () => {
  analystId = (await makeUser()).id;
  initiativeId = (await makeInitiative('Queue ward')).id;
  await addMember(initiativeId, analystId, 'analyst');
  ({ versionId } = await makeReadyExtract(analystId, initiativeId, generateCallBackCohort({ rows: 400 }).csv));
});

afterAll(async () => {
  await closeOwnerDb();
});

async function newAnalysis(specOverride: Spec = spec): Promise<string> {
  const created = await withIdentity(analystId, (t) =>
    createAnalysis(t, { id: analystId, clientAddress: 'test' }, {
      initiativeId, extractVersionId: versionId, title: 'Call-back by age band', question: 'Does the call-back help older patients more?',
      prespecified: false, spec: specOverride,
    }),
  );
  return created.id;
}

const start = (analysisId: string, options: StartOptions = {}) =>
  withIdentity(analystId, (t) => startRun(t, { id: analystId, clientAddress: 'test' }, analysisId, options));

async function runsOf(analysisId: string): Promise<{ id: string; status: string }[]> {
  return ownerDb().query('SELECT id, status FROM runs WHERE analysis_id = :analysisId', {
    replacements: { analysisId }, type: QueryTypes.SELECT,
  });
}

async function jobsOf(runId: string): Promise<{ state: string }[]> {
  return ownerDb().query(`SELECT state FROM pgboss.job WHERE name = :queue AND data->>'runId' = :runId`, {
    replacements: { queue: RUN_QUEUE, runId }, type: QueryTypes.SELECT,
  });
}

describe('starting a run', () => {
  it('writes the run and its job together', async () => {
    const analysisId = await newAnalysis();
    const { runId } = await start(analysisId);
    expect(await jobsOf(runId)).toEqual([{ state: 'created' }]);
    expect(await runsOf(analysisId)).toEqual([{ id: runId, status: 'queued' }]);
  });

  it('leaves no run, no job and no audit event when the queue refuses the job, and says so to the client', async () => {
    const analysisId = await newAnalysis();
    const failingQueue: StartOptions['enqueue'] = async () => {
      throw new Error('connection to the queue was lost');
    };
    const attempt = start(analysisId, { enqueue: failingQueue });
    await expect(attempt).rejects.toBeInstanceOf(AppError);
    await expect(attempt).rejects.toMatchObject({ status: 503, code: 'queue-unavailable' });
    await expect(attempt).rejects.not.toMatchObject({ message: expect.stringContaining('connection') });
    expect(await runsOf(analysisId)).toEqual([]);
    const events = await ownerDb().query<{ action: string }>(
      `SELECT action FROM audit_events WHERE details->>'analysisId' = :analysisId`, { replacements: { analysisId }, type: QueryTypes.SELECT },
    );
    expect(events).toEqual([]);
  });

  it('rolls back as well when the job itself cannot be written (no such queue)', async () => {
    const analysisId = await newAnalysis();
    const { sendInTransaction } = await import('@/lib/server/queue');
    const attempt = start(analysisId, { enqueue: (t, job) => sendInTransaction(t, 'no-such-queue', job).then(() => undefined) });
    await expect(attempt).rejects.toMatchObject({ code: 'queue-unavailable' });
    expect(await runsOf(analysisId)).toEqual([]);
  });
});

describe('a queued run whose job is gone', () => {
  it('is ended by the sweep with a reason once older than the stale timeout, and the end is audited', async () => {
    const analysisId = await newAnalysis();
    const { runId } = await start(analysisId);
    await ownerDb().query(`DELETE FROM pgboss.job WHERE name = :queue AND data->>'runId' = :runId`, { replacements: { queue: RUN_QUEUE, runId } });
    // Younger than the stale timeout (5 s in tests), it still reads as queued.
    expect((await withIdentity(analystId, (t) => getRun(t, runId, { withResult: false })))?.status).toBe('queued');
    await ownerDb().query(`UPDATE runs SET queued_at = now() - interval '1 hour' WHERE id = :runId`, { replacements: { runId } });
    const run = await withIdentity(analystId, (t) => getRun(t, runId, { withResult: false }));
    expect(run?.status).toBe('failed');
    expect(run?.error?.code).toBe('job-missing');
    expect(run?.error?.message).toMatch(/start a new run/);
    const [event] = await ownerDb().query<{ details: { reason: string } }>(
      `SELECT details FROM audit_events WHERE subject_id = :runId AND action = 'run.failed'`, { replacements: { runId }, type: QueryTypes.SELECT },
    );
    expect(event.details.reason).toBe('job-missing');
  });

  it('is left alone while its job still waits, however long', async () => {
    const analysisId = await newAnalysis();
    const { runId } = await start(analysisId);
    await ownerDb().query(`UPDATE runs SET queued_at = now() - interval '1 hour' WHERE id = :runId`, { replacements: { runId } });
    expect((await withIdentity(analystId, (t) => getRun(t, runId, { withResult: false })))?.status).toBe('queued');
  });
});

describe('what a failed run shows', () => {
  it('an engine refusal: a kebab-case code and the engine’s words naming the level and column', async () => {
    const analysisId = await newAnalysis();
    // A stored spec naming a level the data lack, as a stale analysis might.
    await ownerDb().query(`UPDATE analyses SET spec = jsonb_set(spec, '{modifier,reference}', '"17-"') WHERE id = :id`, { replacements: { id: analysisId } });
    const { runId } = await start(analysisId);
    expect(await executeRun(runId, analystId, { threads: 0 })).toBe('failed');
    const run = await withIdentity(analystId, (t) => getRun(t, runId));
    expect(run?.error?.code).toBe('reference-level-not-found');
    expect(run?.error?.message).toContain('"17-"');
    expect(run?.error?.message).toContain('age_band');
  });

  it('an internal error (damaged stored data): a generic message with the run as reference, not the raw message', async () => {
    // A version of its own, so no decoded copy of its columns is cached yet.
    const own = await makeReadyExtract(analystId, initiativeId, generateCallBackCohort({ rows: 300 }).csv);
    const created = await withIdentity(analystId, (t) =>
      createAnalysis(t, { id: analystId, clientAddress: 'test' }, {
        initiativeId, extractVersionId: own.versionId, title: 'Damaged store', question: 'What does a damaged column show?',
        prespecified: false, spec,
      }),
    );
    await ownerDb().query(
      `UPDATE extract_columns SET values = substring(values from 1 for 8) WHERE version_id = :versionId AND name = 'comorbidity_score'`,
      { replacements: { versionId: own.versionId } },
    );
    const { runId } = await start(created.id);
    expect(await executeRun(runId, analystId, { threads: 0 })).toBe('failed');
    const run = await withIdentity(analystId, (t) => getRun(t, runId));
    expect(run?.error?.code).toBe('internal-error');
    expect(run?.error?.message).toContain(runId);
    expect(run?.error?.message).not.toMatch(/bytes|decode|RangeError/i);
  });
});
