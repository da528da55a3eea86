/**
 * Results-page benchmark (issue target, measured, not asserted): the results page of a
 * 12,000-row demo run, and the review board, answer in at most 200 ms at the 95th
 * percentile with 20 and with 50 concurrent readers on loopback; prints p50, p95 and p99. Uses its own cluster (port 54369, .data/bench-results) and the
 * built server (built first when dist/ is missing), both removed or stopped at the end.
 */
import { spawn, spawnSync } from 'node:child_process';
import { existsSync } from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';

const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..');
const dbPort = 54369;
const appPort = 4339;
const dataRoot = path.join(root, '.data', 'bench-results');
Object.assign(process.env, {
  CROSSGRAIN_DB_PORT: String(dbPort), CROSSGRAIN_ENV: 'test', CROSSGRAIN_DATA_DIR: dataRoot, CROSSGRAIN_SMTP_PORT: '2539',
});
/** The two loads: 20 and 50 concurrent signed-in readers. */
const READER_COUNTS = [20, 50];
const REQUESTS = 600;

const { startCluster, destroyCluster } = await import('../db/scripts/postgres.mjs');
const cluster = { port: dbPort, dataRoot };
startCluster(cluster);
const env = { ...process.env };
let server: ReturnType<typeof spawn> | null = null;
try {
  if (spawnSync('npx', ['tsx', 'db/migrate.ts', 'up'], { cwd: root, env }).status !== 0) throw new Error('migration failed');
  if (!existsSync(path.join(root, 'dist/server/entry.mjs'))) spawnSync('npx', ['astro', 'build', '--silent'], { cwd: root, env, stdio: 'inherit' });
  const { seedDemo } = await import('../db/seed');
  const { seedDemoExtracts } = await import('../db/seeds/demoExtracts');
  const { ownerDb, closeOwnerDb } = await import('../tests/support/factories');
  const { sequelize, withIdentity } = await import('@/lib/server/db');
  const { createAnalysis, analysableVersions } = await import('@/features/analyses/analyses.server');
  const { startRun } = await import('@/features/runs/runs.server');
  const { executeRun } = await import('@/features/runs/executeRun');
  const { CALL_BACK_DEMO_SPEC } = await import('@/features/analyses/demoSpecs');
  const { QueryTypes } = await import('sequelize');
  await seedDemo(ownerDb());
  await seedDemoExtracts();
  const [analyst] = await ownerDb().query<{ id: string }>("SELECT id FROM users WHERE email = 'analyst@tern-valley.example'", { type: QueryTypes.SELECT });
  const [initiative] = await ownerDb().query<{ id: string }>("SELECT id FROM initiatives WHERE slug = 'call-back-72h'", { type: QueryTypes.SELECT });
  const runId = await withIdentity(analyst.id, async (t) => {
    const [version] = await analysableVersions(t, initiative.id);
    const { id } = await createAnalysis(t, { id: analyst.id, clientAddress: 'bench' }, {
      initiativeId: initiative.id, extractVersionId: version.id, title: 'Benchmark by age band', question: 'Does the call-back help older patients more?',
      prespecified: false,
      spec: CALL_BACK_DEMO_SPEC,
    });
    return (await startRun(t, { id: analyst.id, clientAddress: 'bench' }, id)).runId;
  });
  if ((await executeRun(runId, analyst.id, { threads: 0 })) !== 'succeeded') throw new Error('the benchmark run failed');
  await sequelize.close();
  await closeOwnerDb();

  // CROSSGRAIN_BENCH_CPU_PROF=DIR writes the server's CPU profile there (open it in Chrome's DevTools).
  // The profile is written at a normal exit, so SIGTERM is turned into one.
  const entry = path.join(root, 'dist/server/entry.mjs');
  const profiled = process.env.CROSSGRAIN_BENCH_CPU_PROF
    ? ['--cpu-prof', `--cpu-prof-dir=${process.env.CROSSGRAIN_BENCH_CPU_PROF}`, '--input-type=module', '-e',
       `process.on('SIGTERM', () => process.exit(0)); await import(${JSON.stringify(entry)});`]
    : [entry];
  server = spawn(process.execPath, profiled, { cwd: root, env: { ...env, HOST: '127.0.0.1', PORT: String(appPort) }, stdio: 'ignore' });
  const base = `http://127.0.0.1:${appPort}`;
  for (let i = 0; i < 100; i += 1) {
    try {
      if ((await fetch(`${base}/api/health`)).ok) break;
    } catch { /* not up yet */ }
    await new Promise((resolve) => setTimeout(resolve, 100));
  }
  const signIn = await fetch(`${base}/api/auth/sign-in`, {
    method: 'POST', headers: { 'Content-Type': 'application/json' },
    body: JSON.stringify({ email: 'clinician@tern-valley.example', password: 'tern-valley-demo' }),
  });
  const cookie = signIn.headers.getSetCookie()[0].split(';')[0];
  const pages = [
    { name: 'results page /runs/{id} (12,000-row demo run)', url: `${base}/runs/${runId}`, mark: 'result-tables' },
    { name: 'review board /initiatives/{id}/board', url: `${base}/initiatives/${initiative.id}/board`, mark: 'Review board' },
  ];
  for (const page of pages) for (let i = 0; i < 20; i += 1) await (await fetch(page.url, { headers: { Cookie: cookie } })).text();

  /** `requests` loads of `url` by `readers` concurrent readers: latencies in ms, sorted. */
  async function measure(url: string, mark: string, readers: number, requests: number) {
    const latencies: number[] = [];
    let next = 0;
    let failures = 0;
    const started = performance.now();
    await Promise.all(Array.from({ length: readers }, async () => {
      while (next < requests) {
        next += 1;
        const t0 = performance.now();
        const response = await fetch(url, { headers: { Cookie: cookie } });
        const html = await response.text();
        latencies.push(performance.now() - t0);
        if (response.status !== 200 || !html.includes(mark)) failures += 1;
      }
    }));
    const seconds = (performance.now() - started) / 1000;
    latencies.sort((a, b) => a - b);
    return { latencies, failures, perSecond: requests / seconds };
  }

  for (const page of pages) {
    for (const readers of READER_COUNTS) {
      const { latencies, failures, perSecond } = await measure(page.url, page.mark, readers, REQUESTS);
      const at = (q: number) => latencies[Math.min(latencies.length - 1, Math.floor(q * latencies.length))];
      const p95 = at(0.95);
      console.log(`${page.name}: ${REQUESTS} requests, ${readers} concurrent readers, ${perSecond.toFixed(0)} requests/s, ${failures} failures`);
      console.log(`  p50 ${at(0.5).toFixed(1)} ms   p95 ${p95.toFixed(1)} ms   p99 ${at(0.99).toFixed(1)} ms   max ${latencies[latencies.length - 1].toFixed(1)} ms   target p95 <= 200 ms: ${p95 <= 200 ? 'met' : 'NOT MET'}`);
    }
  }
} finally {
  if (server) {
    const exited = new Promise((resolve) => server?.once('exit', resolve));
    server.kill('SIGTERM');
    await exited;
  }
  destroyCluster(cluster);
}
