/**
 * Runs end to end below the web layer: a queued run executed by the worker code stores
 * the engine's result unchanged with its provenance; a worker killed mid-run leaves its
 * run failed with a reason after the stale timeout, and a new run then succeeds.
 */
import { spawn, type ChildProcess } from 'node:child_process';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { QueryTypes } from 'sequelize';
import { runAnalysis } from '@/engine';
import type { Spec } from '@/engine/boundary/schemas';
import { createAnalysis } from '@/features/analyses/analyses.server';
import { CALL_BACK_DEMO_SPEC } from '@/features/analyses/demoSpecs';
import { generateCallBackCohort } from '@/features/extracts/demoCohorts';
import { loadColumns } from '@/features/extracts/columns.server';
import { toEngineData } from '@/features/extracts/engineData';
import { executeRun } from '@/features/runs/executeRun';
import { columnRoles, getRun, requestCancel, specHash, startRun, startVerification } from '@/features/runs/runs.server';
import { cautionText } from '@/lib/cautions';
import { sequelize, withIdentity } from '@/lib/server/db';
import { makeReadyExtract } from '../support/extractFactory';
import { addMember, closeOwnerDb, makeInitiative, makeUser, ownerDb } from '../support/factories';

const root = path.resolve(import.meta.dirname, '../..');
let analystId: string;
let initiativeId: string;
let versionId: string;

/** The demo call-back analysis with two of its covariates. */
const spec: Spec = { ...CALL_BACK_DEMO_SPEC, covariates: CALL_BACK_DEMO_SPEC.covariates.slice(0, 2) };

beforeAll(async () => {
  analystId = (await makeUser()).id;
  initiativeId = (await makeInitiative('Run ward')).id;
  await addMember(initiativeId, analystId, 'analyst');
  ({ versionId } = await makeReadyExtract(analystId, initiativeId, generateCallBackCohort({ rows: 3000 }).csv));
});

afterAll(async () => {
  await closeOwnerDb();
});

async function newAnalysis(specOverride: Spec = spec) {
  return withIdentity(analystId, (t) =>
    createAnalysis(t, { id: analystId, clientAddress: 'test' }, {
      initiativeId, extractVersionId: versionId, title: 'Call-back by age band', question: 'Does the call-back help older patients more?',
      prespecified: true, spec: specOverride,
    }),
  );
}

async function queue(analysisId: string) {
  return withIdentity(analystId, (t) => startRun(t, { id: analystId, clientAddress: 'test' }, analysisId));
}

describe('a run', () => {
  it('stores the engine result unchanged, with the extract hash, spec hash, engine version and caution', async () => {
    const { id } = await newAnalysis();
    const { runId } = await queue(id);
    expect(await executeRun(runId, analystId, { threads: 0 })).toBe('succeeded');
    const run = await withIdentity(analystId, (t) => getRun(t, runId));
    expect(run?.status).toBe('succeeded');
    // The same engine call on the same columns gives the same result, bit for bit.
    const loaded = await withIdentity(analystId, (t) => loadColumns(t, versionId, Object.keys(columnRoles(spec))));
    const direct = await runAnalysis(toEngineData(loaded.rowCount, loaded.columns, columnRoles(spec)), spec, { threads: 0 });
    expect(run?.result).toEqual(JSON.parse(JSON.stringify(direct)));
    expect(run?.specHash).toBe(specHash(spec));
    expect(run?.cautionText).toBe(cautionText());
    expect(run?.engineVersion).toBe((direct as { engineVersion: string }).engineVersion);
    // Prespecified before... the extract was uploaded earlier than the declaration: not exploratory.
    expect(run?.exploratory).toBe(false);
    const events = await ownerDb().query<{ action: string; details: Record<string, unknown> }>(
      'SELECT action, details FROM audit_events WHERE subject_id = :id ORDER BY chain_position', { replacements: { id: runId }, type: QueryTypes.SELECT },
    );
    expect(events.map((e) => e.action)).toEqual(['run.started', 'run.finished']);
    expect(events[1].details).toMatchObject({ specHash: run?.specHash, extractSha256: run?.extractSha256, cautionText: cautionText() });
  });

  it('fails with the engine’s readable reason on a bad reference level', async () => {
    const { id } = await newAnalysis({ ...spec, covariates: [] });
    // Make the stored spec name a level that the data lack, as a stale analysis might.
    await ownerDb().query(`UPDATE analyses SET spec = jsonb_set(spec, '{modifier,reference}', '"17-"') WHERE id = :id`, { replacements: { id } });
    const { runId } = await queue(id);
    expect(await executeRun(runId, analystId, { threads: 0 })).toBe('failed');
    const run = await withIdentity(analystId, (t) => getRun(t, runId));
    expect(run?.error?.message).toContain('17-');
    expect(run?.result).toBeNull();
  });
});

describe('a worker that dies mid-run', () => {
  let worker: ChildProcess | null = null;
  const startWorker = () => {
    const child = spawn('npx', ['tsx', path.join(root, 'src/features/runs/runWorker.ts')], { cwd: root, env: process.env, stdio: 'ignore', detached: true });
    worker = child;
    return child;
  };
  afterAll(() => {
    if (worker?.pid && worker.exitCode === null) process.kill(-worker.pid, 'SIGKILL');
  });

  it('leaves the run failed with a reason after the timeout, and a new run then succeeds', async () => {
    const long = { ...spec, ci: { level: 0.95, method: 'bootstrap' as const, replicates: 20_000, seed: 7 } };
    const { id } = await newAnalysis(long);
    const first = await queue(id);
    const child = startWorker();
    // Wait until the worker reports bootstrap progress.
    let run = await withIdentity(analystId, (t) => getRun(t, first.runId, { withResult: false }));
    for (let i = 0; i < 300 && !(run?.status === 'running' && run.progress.fraction > 0); i += 1) {
      await new Promise((resolve) => setTimeout(resolve, 100));
      run = await withIdentity(analystId, (t) => getRun(t, first.runId, { withResult: false }));
    }
    expect(run?.status).toBe('running');
    process.kill(-child.pid!, 'SIGKILL');
    await new Promise((resolve) => child.once('exit', resolve));
    // After the stale timeout (5 s in tests) any reader's sweep marks it failed.
    await new Promise((resolve) => setTimeout(resolve, 6_500));
    run = await withIdentity(analystId, (t) => getRun(t, first.runId, { withResult: false }));
    expect(run?.status).toBe('failed');
    expect(run?.error?.code).toBe('worker-stopped');
    expect(run?.error?.message).toMatch(/stopped/);

    // A retry is a new run; a fresh worker takes it.
    await ownerDb().query(`UPDATE analyses SET spec = CAST(:spec AS jsonb) WHERE id = :id`, { replacements: { id, spec: JSON.stringify(spec) } });
    const second = await queue(id);
    startWorker();
    let retry = await withIdentity(analystId, (t) => getRun(t, second.runId, { withResult: false }));
    for (let i = 0; i < 300 && retry && (retry.status === 'queued' || retry.status === 'running'); i += 1) {
      await new Promise((resolve) => setTimeout(resolve, 100));
      retry = await withIdentity(analystId, (t) => getRun(t, second.runId, { withResult: false }));
    }
    expect(retry?.status).toBe('succeeded');
  }, 90_000);
});

describe('verification re-runs under row-level security', () => {
  it('let an auditor start and execute only re-runs that verify a run, never ordinary runs', async () => {
    const auditorId = (await makeUser()).id;
    await addMember(initiativeId, auditorId, 'auditor');
    const { id } = await newAnalysis();
    const { runId } = await queue(id);
    expect(await executeRun(runId, analystId, { threads: 0 })).toBe('succeeded');

    // An ordinary run inserted as the auditor is refused by the policy (42501).
    const ordinary = withIdentity(auditorId, (t) =>
      sequelize.query(
        `INSERT INTO runs (analysis_id, initiative_id, extract_version_id, status, spec, spec_hash, extract_sha256, exploratory,
                           caution_text, caution_version, started_by)
         SELECT analysis_id, initiative_id, extract_version_id, 'queued', spec, spec_hash, extract_sha256, exploratory,
                caution_text, caution_version, :auditor FROM runs WHERE id = :id`,
        { replacements: { id: runId, auditor: auditorId }, transaction: t },
      ),
    );
    await expect(ordinary).rejects.toMatchObject({ parent: { code: '42501' } });
    // Nor can the auditor change the analyst's run: the update matches no row it may touch.
    const touched = await withIdentity(auditorId, (t) =>
      sequelize.query<{ id: string }>("UPDATE runs SET status = 'failed' WHERE id = :id RETURNING id", {
        replacements: { id: runId }, type: QueryTypes.SELECT, transaction: t,
      }),
    );
    expect(touched).toEqual([]);
    // A verification re-run goes through, and its worker (acting as the auditor) executes it.
    const started = await withIdentity(auditorId, (t) => startVerification(t, { id: auditorId, clientAddress: 'test' }, runId));
    expect(await executeRun(started.runId, auditorId, { threads: 0 })).toBe('succeeded');
    const rerun = await withIdentity(auditorId, (t) => getRun(t, started.runId, { withResult: false }));
    expect(rerun?.verification?.reproduced).toBe(true);
  });

  it('lets only a run’s starter or an administrator of its initiative cancel it, whatever the caller asks of the database (issue 13)', async () => {
    const auditorId = (await makeUser()).id;
    const otherAnalystId = (await makeUser()).id;
    const adminId = (await makeUser({ isAdmin: true })).id;
    await addMember(initiativeId, auditorId, 'auditor');
    await addMember(initiativeId, otherAnalystId, 'analyst');
    await addMember(initiativeId, adminId, 'clinician');
    const { id } = await newAnalysis();
    const { runId } = await queue(id);
    expect(await executeRun(runId, analystId, { threads: 0 })).toBe('succeeded');
    const verification = await withIdentity(auditorId, (t) => startVerification(t, { id: auditorId, clientAddress: 'test' }, runId));
    const other = await queue(id);
    const statusOf = async (rid: string) =>
      (await ownerDb().query<{ status: string }>('SELECT status FROM runs WHERE id = :rid', { replacements: { rid }, type: QueryTypes.SELECT }))[0]?.status;

    // Another analyst, and even the analyst who started the verified run, cannot stop the auditor's re-run.
    for (const who of [otherAnalystId, analystId]) {
      await expect(withIdentity(who, (t) => requestCancel(t, { id: who, clientAddress: 'test' }, verification.runId))).rejects.toMatchObject({ status: 404 });
      const touched = await withIdentity(who, (t) =>
        sequelize.query<{ id: string }>('UPDATE runs SET cancel_requested = true WHERE id = :rid RETURNING id', {
          replacements: { rid: verification.runId }, type: QueryTypes.SELECT, transaction: t,
        }),
      );
      expect(touched).toEqual([]);
    }
    expect(await statusOf(verification.runId)).toBe('queued');
    // Nor can another analyst stop their colleague's run.
    await expect(withIdentity(otherAnalystId, (t) => requestCancel(t, { id: otherAnalystId, clientAddress: 'test' }, other.runId))).rejects.toMatchObject({ status: 404 });
    expect(await statusOf(other.runId)).toBe('queued');
    // The starter can, and an administrator who belongs to the initiative can.
    expect(await withIdentity(auditorId, (t) => requestCancel(t, { id: auditorId, clientAddress: 'test' }, verification.runId))).toBe('cancelled');
    expect(await withIdentity(adminId, (t) => requestCancel(t, { id: adminId, clientAddress: 'test' }, other.runId))).toBe('cancelled');
    // An administrator outside the initiative sees none of its runs (SECURITY.md, Runs), so cannot cancel one either.
    const outsiderId = (await makeUser({ isAdmin: true })).id;
    const third = await queue(id);
    await expect(withIdentity(outsiderId, (t) => requestCancel(t, { id: outsiderId, clientAddress: 'test' }, third.runId))).rejects.toMatchObject({ status: 404 });
    const touched = await withIdentity(outsiderId, (t) =>
      sequelize.query<{ id: string }>('UPDATE runs SET cancel_requested = true WHERE id = :rid RETURNING id', {
        replacements: { rid: third.runId }, type: QueryTypes.SELECT, transaction: t,
      }),
    );
    expect(touched).toEqual([]);
    expect(await statusOf(third.runId)).toBe('queued');
  });
});
