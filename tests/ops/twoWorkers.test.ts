/**
 * Scale-out that can be seen: two workers share the queue, the runs are split between
 * them, each run is executed exactly once, and each run names the worker (host:process)
 * that executed it, in GET /api/runs/{id} and on its results page.
 */
import { spawn, type ChildProcess } from 'node:child_process';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { QueryTypes } from 'sequelize';
import { startServer, type ServerHandle } from '../browser/harness';
import { closeOwnerDb, ownerDb } from '../support/factories';
import type { ApiClient } from '../support/http';
import { createAnalysis, makeWorld, queueRun, signedInAnalyst, waitForRunEnd, type World } from '../support/runWorld';

const root = path.resolve(import.meta.dirname, '../..');
const RUNS = 8;

interface WorkerProcess { child: ChildProcess; name: Promise<string> }

/** Starts `npm run worker`'s program with its log on a pipe; `name` resolves once it is ready. */
function startLoggedWorker(): WorkerProcess {
  const child = spawn(process.execPath, [path.join(root, 'node_modules/tsx/dist/cli.mjs'), path.join(root, 'src/features/runs/runWorker.ts')], {
    cwd: root, env: { ...process.env, LOG_LEVEL: 'info' }, stdio: ['ignore', 'pipe', 'ignore'], detached: true,
  });
  const name = new Promise<string>((resolve, reject) => {
    let pending = '';
    const timer = setTimeout(() => reject(new Error('The worker did not report ready in time')), 40_000);
    child.stdout?.on('data', (chunk: Buffer) => {
      pending += chunk.toString('utf8');
      for (const line of pending.split('\n')) {
        if (!line.includes('"worker ready"')) continue;
        clearTimeout(timer);
        resolve((JSON.parse(line) as { worker: string }).worker);
      }
    });
  });
  return { child, name };
}

async function stopWorker(worker: WorkerProcess): Promise<void> {
  if (worker.child.exitCode !== null || !worker.child.pid) return;
  const exited = new Promise((resolve) => worker.child.once('exit', resolve));
  process.kill(-worker.child.pid, 'SIGTERM');
  await exited;
}

let server: ServerHandle;
let world: World;
let client: ApiClient;
const workers: WorkerProcess[] = [];

beforeAll(async () => {
  server = await startServer();
  world = await makeWorld('Two-worker ward');
  client = await signedInAnalyst(world);
});

afterAll(async () => {
  await Promise.all(workers.map(stopWorker));
  await server?.close();
  await closeOwnerDb();
});

describe('two workers', () => {
  it('split the runs between them, execute each once, and each run names its worker', async () => {
    workers.push(startLoggedWorker(), startLoggedWorker());
    const names = await Promise.all(workers.map((w) => w.name));
    expect(new Set(names).size).toBe(2);

    const analysisId = await createAnalysis(client, world, 'Shared by two workers');
    const runIds: string[] = [];
    for (let i = 0; i < RUNS; i++) runIds.push(await queueRun(client, analysisId));
    const ended = await Promise.all(runIds.map((id) => waitForRunEnd(client, id, 90_000)));
    expect(ended.map((run) => run.status)).toEqual(runIds.map(() => 'succeeded'));

    const byWorker = new Map<string, number>();
    for (const run of ended) byWorker.set(String(run.worker), (byWorker.get(String(run.worker)) ?? 0) + 1);
    expect([...byWorker.keys()].sort()).toEqual([...names].sort());
    expect([...byWorker.values()].every((count) => count >= 1)).toBe(true);

    // Executed once: one finish event per run, naming the same worker as the run.
    const finishes = await ownerDb().query<{ subject_id: string; worker: string }>(
      `SELECT subject_id, details->>'worker' AS worker FROM audit_events WHERE action = 'run.finished' AND subject_id IN (:runIds)`,
      { replacements: { runIds }, type: QueryTypes.SELECT },
    );
    expect(finishes).toHaveLength(RUNS);
    for (const run of ended) expect(finishes.find((f) => f.subject_id === run.id)?.worker).toBe(run.worker);

    // The results page shows it too.
    const page = await client.request('GET', `/runs/${runIds[0]}`);
    expect(page.status).toBe(200);
    const html = await page.text();
    expect(html).toMatch(new RegExp(`data-testid="run-worker"[^>]*>${String(ended[0].worker).replace(/[.*+?^${}()|[\]\\]/g, '\\$&')}<`));
  });
});
