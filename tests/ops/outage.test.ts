/**
 * A database outage under signed-in traffic: PostgreSQL is stopped abruptly (pg_ctl -m
 * immediate) for several seconds while a signed-in client polls /api/me, then started
 * again. The same app server process keeps answering throughout (503
 * `database-unavailable` during the outage, never a dropped connection or a 500), serves
 * again by itself once the database is back, and a run queued before the outage is
 * executed once afterwards by the worker that lived through it.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { QueryTypes } from 'sequelize';
import { startCluster, stopCluster } from '../../db/scripts/postgres.mjs';
import { RUN_QUEUE } from '@/features/runs/runQueue';
import { testSettings } from '../../scripts/lib/testEnv.mjs';
import { startServer, startWorker, type ServerHandle } from '../browser/harness';
import { closeOwnerDb, ownerDb } from '../support/factories';
import type { ApiClient } from '../support/http';
import { createAnalysis, makeWorld, queueRun, signedInAnalyst, waitForRunEnd, type World } from '../support/runWorld';

const cluster = { port: testSettings.dbPort, dataRoot: testSettings.dataRoot };
const OUTAGE_MS = 6_000;
const sleep = (ms: number) => new Promise((resolve) => setTimeout(resolve, ms));

let server: ServerHandle;
let worker: ReturnType<typeof startWorker> | undefined;
let world: World;
let client: ApiClient;

beforeAll(async () => {
  server = await startServer();
  world = await makeWorld('Outage ward');
  client = await signedInAnalyst(world);
});

afterAll(async () => {
  startCluster(cluster); // whatever happened, leave the cluster running for the next file
  await worker?.stop();
  await server?.close();
  await closeOwnerDb();
});

interface Poll { at: number; status: number | 'no answer'; code?: string }

describe('a database outage', () => {
  it('gets 503s from the same app process, which serves again afterwards; a run queued before it finishes', async () => {
    const runId = await queueRun(client, await createAnalysis(client, world, 'Queued before the outage'));
    // The job becomes available only after the outage, so the worker takes it afterwards.
    await ownerDb().query(`UPDATE pgboss.job SET start_after = now() + make_interval(secs => :secs) WHERE name = :queue AND data->>'runId' = :runId`, {
      replacements: { secs: (OUTAGE_MS + 5_000) / 1000, queue: RUN_QUEUE, runId }, type: QueryTypes.UPDATE,
    });
    worker = startWorker();
    // Wait until the worker's queue is connected and polling.
    const workerConnected = async () => (await ownerDb().query<{ n: string }>(
      "SELECT count(*) AS n FROM pg_stat_activity WHERE application_name = 'crossgrain'", { type: QueryTypes.SELECT },
    ))[0].n !== '0';
    const until = Date.now() + 30_000;
    while (!(await workerConnected()) && Date.now() < until) await sleep(250);
    await sleep(1_500);
    const appPid = server.server.pid;

    const polls: Poll[] = [];
    let polling = true;
    const poller = (async () => {
      while (polling) {
        const at = Date.now();
        try {
          const response = await client.request('GET', '/api/me');
          const body = response.status === 200 ? undefined : ((await response.json()) as { error?: { code?: string } });
          polls.push({ at, status: response.status, code: body?.error?.code });
        } catch {
          polls.push({ at, status: 'no answer' });
        }
        await sleep(250);
      }
    })();

    await sleep(1_000);
    const down = Date.now();
    stopCluster(cluster, { mode: 'immediate' });
    await sleep(2_000);
    // A page during the outage: the product's own 503 page, not a stack trace or a 500.
    const page = await client.request('GET', '/');
    expect(page.status).toBe(503);
    expect(page.headers.get('retry-after')).toBe('5');
    expect(await page.text()).toContain('Crossgrain is waiting for its database');
    await sleep(OUTAGE_MS - 2_000);
    startCluster(cluster);
    const up = Date.now();
    // Service resumes by itself: wait for the first 200 after the restart.
    while (Date.now() - up < 20_000 && !polls.some((p) => p.at > up && p.status === 200)) await sleep(250);
    await sleep(1_000);
    polling = false;
    await poller;

    expect(server.server.exitCode).toBeNull();
    expect(server.server.pid).toBe(appPid);
    expect(worker.child.exitCode).toBeNull();
    expect(polls.filter((p) => p.status === 'no answer')).toEqual([]);
    expect(polls.filter((p) => p.status !== 200 && p.status !== 503)).toEqual([]);
    const duringOutage = polls.filter((p) => p.at > down + 500 && p.at < up - 500);
    expect(duringOutage.length).toBeGreaterThan(5);
    expect(duringOutage.every((p) => p.status === 503 && p.code === 'database-unavailable')).toBe(true);
    expect(polls.filter((p) => p.at < down).every((p) => p.status === 200)).toBe(true);
    expect(polls.some((p) => p.at > up && p.status === 200)).toBe(true);

    const run = await waitForRunEnd(client, runId);
    expect(run.status).toBe('succeeded');
    const executions = await ownerDb().query<{ n: string }>(
      "SELECT count(*) AS n FROM audit_events WHERE subject_id = :runId AND action = 'run.finished'",
      { replacements: { runId }, type: QueryTypes.SELECT },
    );
    expect(Number(executions[0].n)).toBe(1); // executed once
  });
});
