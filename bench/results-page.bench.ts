/**
 * Results-page benchmark (issue target, measured, not asserted): the results page of a
 * 12,000-row demo run, and the review board, answer in at most 200 ms at the 95th
 * percentile with 20 and with 50 concurrent readers on loopback; prints p50, p95 and p99,
 * and first, one reader at a time, each page's size, the server's CPU time per view and the
 * database statements per view (and the same for the plot data the results page fetches).
 * Each load is measured after a warm-up at the same load, by readers in a process of their
 * own (bench/support/readers.mjs).
 * CROSSGRAIN_BENCH_LOAD=0 skips the loads; CROSSGRAIN_BENCH_STATEMENTS=1 lists one view's statements; CROSSGRAIN_BENCH_VS measures another build in turn
 * (see below). Uses its own cluster (port 54369, .data/bench-results) and the
 * built server (built first when dist/ is missing), both removed or stopped at the end.
 */
import { spawn, spawnSync } from 'node:child_process';
import { existsSync, readFileSync, statSync } from 'node:fs';
import path from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';

const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..');
const dbPort = 54369;
const appPort = 4339;
const dataRoot = path.join(root, '.data', 'bench-results');
Object.assign(process.env, {
  CROSSGRAIN_DB_PORT: String(dbPort), CROSSGRAIN_ENV: 'test', CROSSGRAIN_DATA_DIR: dataRoot, CROSSGRAIN_SMTP_PORT: '2539',
});
/** The two loads: 20 and 50 concurrent signed-in readers. */
const READER_COUNTS = [20, 50];
/** CROSSGRAIN_BENCH_LOAD=0 prints only the one-reader figures (size, CPU, statements) and skips the loads. */
const withLoad = process.env.CROSSGRAIN_BENCH_LOAD !== '0';
/**
 * Requests measured per load, after WARM_UP_REQUESTS at the same load that are not counted:
 * a server that has just started compiles its request path under load at first (about
 * twice the CPU per request for the first thousand or so), which a server in service has
 * long done.
 */
const REQUESTS = 2000;
const WARM_UP_REQUESTS = 1000;

const { startCluster, destroyCluster, runClusterTool, clusterSettings } = await import('../db/scripts/postgres.mjs');
const cluster = { port: dbPort, dataRoot };
startCluster(cluster);
const env = { ...process.env };
const servers: ReturnType<typeof spawn>[] = [];
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
  // CROSSGRAIN_BENCH_VS=PATH (the root of another built checkout, for instance of the previous
  // commit) starts that server too, on the same database, and measures the two in turn, A B A B,
  // so that both meet the same load from the rest of the machine. A checkout without
  // scripts/serve.mjs is started as Astro's standalone server (dist/server/entry.mjs).
  const serverOf = (checkout: string) =>
    (existsSync(path.join(checkout, 'scripts/serve.mjs')) ? path.join(checkout, 'scripts/serve.mjs') : path.join(checkout, 'dist/server/entry.mjs'));
  const builds = [
    { label: 'this build', entry: serverOf(root), port: appPort },
    ...(process.env.CROSSGRAIN_BENCH_VS ? [{ label: 'other build', entry: serverOf(path.resolve(process.env.CROSSGRAIN_BENCH_VS)), port: appPort + 1 }] : []),
  ];
  const targets = [];
  for (const build of builds) {
    // As `npm start` serves: React's production build, and scripts/serve.mjs with its default
    // number of processes unless CROSSGRAIN_APP_PROCESSES says otherwise; one when profiling.
    const served = process.env.CROSSGRAIN_BENCH_CPU_PROF
      ? ['--cpu-prof', `--cpu-prof-dir=${process.env.CROSSGRAIN_BENCH_CPU_PROF}`, '--input-type=module', '-e',
         `process.on('SIGTERM', () => process.exit(0)); await import(${JSON.stringify(pathToFileURL(build.entry).href)});`]
      : [build.entry];
    const processes = process.env.CROSSGRAIN_BENCH_CPU_PROF ? { CROSSGRAIN_APP_PROCESSES: '1' } : {};
    const child = spawn(process.execPath, served, { cwd: root, env: { ...env, ...processes, HOST: '127.0.0.1', PORT: String(build.port), NODE_ENV: 'production' }, stdio: 'ignore' });
    servers.push(child);
    const base = `http://127.0.0.1:${build.port}`;
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
      { name: 'results page /runs/{id} (12,000-row demo run)', url: `${base}/runs/${runId}`, mark: 'result-tables', headers: {} },
      { name: 'review board /initiatives/{id}/board', url: `${base}/initiatives/${initiative.id}/board`, mark: 'Review board', headers: {} },
    ];
    // The plot data the results page's plots fetch (builds that serve it), first and then as a
    // browser asks again on a later view (304 without a body).
    const plotUrl = `${base}/api/runs/${runId}/plot-data`;
    const plotData = await fetch(plotUrl, { headers: { Cookie: cookie } });
    await plotData.arrayBuffer();
    const etag = plotData.headers.get('etag');
    const extras = plotData.ok && etag
      ? [{ name: 'plot data /api/runs/{id}/plot-data', url: plotUrl, mark: '', headers: {} }, { name: 'plot data, asked again (If-None-Match)', url: plotUrl, mark: '', headers: { 'If-None-Match': etag } }]
      : [];
    for (const page of pages) for (let i = 0; i < 20; i += 1) await (await fetch(page.url, { headers: { Cookie: cookie } })).text();
    targets.push({ label: build.label, pid: child.pid, cookie, pages, extras });
  }

  // Where one view's time goes, one reader at a time: the page's size, the server's CPU time
  // per view (user + system from /proc, so other work on the machine does not count), and
  // the statements the database receives for one view (its statement log, on only here).
  // The server and its app processes (scripts/serve.mjs forks one per core).
  const ownCpuMs = (pid: number) => {
    const fields = readFileSync(`/proc/${pid}/stat`, 'utf8').split(') ')[1].split(' ');
    return ((Number(fields[11]) + Number(fields[12])) * 1000) / 100;
  };
  const serverCpuMs = (pid: number | undefined) => {
    if (pid === undefined) return 0;
    const children = readFileSync(`/proc/${pid}/task/${pid}/children`, 'utf8').trim().split(/\s+/).filter(Boolean).map(Number);
    return [pid, ...children].reduce((total, id) => total + ownCpuMs(id), 0);
  };
  const psql = (sql: string) => runClusterTool('psql', ['-q', '-d', 'postgres', '-c', sql], { stdio: 'ignore' }, cluster);
  const logFile = clusterSettings(cluster).logFile;
  const ROUNDS = 5;
  const VIEWS = 20;
  for (let index = 0; index < targets[0].pages.length + targets[0].extras.length; index += 1) {
    const cpu = targets.map(() => 0);
    const bytes = targets.map(() => 0);
    const statuses = targets.map(() => 0);
    for (let round = 0; round < ROUNDS; round += 1) {
      for (const [t, target] of targets.entries()) {
        const page = [...target.pages, ...target.extras][index];
        if (!page) continue;
        const cpu0 = serverCpuMs(target.pid);
        for (let i = 0; i < VIEWS; i += 1) {
          const response = await fetch(page.url, { headers: { Cookie: target.cookie, ...page.headers } });
          bytes[t] = (await response.arrayBuffer()).byteLength;
          statuses[t] = response.status;
        }
        cpu[t] += serverCpuMs(target.pid) - cpu0;
      }
    }
    for (const [t, target] of targets.entries()) {
      const page = [...target.pages, ...target.extras][index];
      if (!page) continue;
      psql("ALTER SYSTEM SET log_statement = 'all'");
      psql('SELECT pg_reload_conf()');
      await new Promise((resolve) => setTimeout(resolve, 300));
      const logStart = statSync(logFile).size;
      await (await fetch(page.url, { headers: { Cookie: target.cookie, ...page.headers } })).arrayBuffer();
      await new Promise((resolve) => setTimeout(resolve, 300));
      const logged = readFileSync(logFile).subarray(logStart).toString('utf8');
      const statements = (logged.match(/LOG: {2}(statement|execute [^:]*):/g) ?? []).length;
      // CROSSGRAIN_BENCH_STATEMENTS=1 lists them (the first 160 characters of each).
      if (process.env.CROSSGRAIN_BENCH_STATEMENTS === '1') {
        for (const line of logged.split('\n').filter((l) => /LOG: {2}(statement|execute [^:]*):/.test(l))) console.log(`    ${line.replace(/.*LOG: {2}/, '').slice(0, 160)}`);
      }
      psql('ALTER SYSTEM RESET log_statement');
      psql('SELECT pg_reload_conf()');
      console.log(`[${target.label}] ${page.name}: ${statuses[t]}, ${(bytes[t] / 1024).toFixed(1)} KiB, server CPU ${(cpu[t] / (ROUNDS * VIEWS)).toFixed(1)} ms per view (mean of ${ROUNDS * VIEWS} one at a time), ${statements} database statements per view (BEGIN and COMMIT included)`);
    }
  }

  /** One load (bench/support/readers.mjs, in its own process): warm-up, then the measured requests. */
  const measure = (url: string, cookie: string, mark: string, readers: number) => {
    const result = spawnSync(process.execPath, [path.join(root, 'bench/support/readers.mjs'), JSON.stringify({ url, cookie, mark, readers, requests: REQUESTS, warmUp: WARM_UP_REQUESTS })], { encoding: 'utf8', maxBuffer: 64 * 1024 * 1024 });
    if (result.status !== 0) throw new Error(`the readers failed: ${result.stderr}`);
    return JSON.parse(result.stdout) as { latencies: number[]; failures: number; perSecond: number; generatorMs: number; busy: number; steal: number };
  };

  for (const [index, page] of (withLoad ? targets[0].pages : []).entries()) {
    for (const readers of READER_COUNTS) {
      for (const target of targets) {
        const loadAverage = readFileSync('/proc/loadavg', 'utf8').split(' ')[0];
        const { latencies, failures, perSecond, generatorMs, busy, steal } = measure(target.pages[index].url, target.cookie, page.mark, readers);
        const at = (q: number) => latencies[Math.min(latencies.length - 1, Math.floor(q * latencies.length))];
        const p95 = at(0.95);
        console.log(`[${target.label}] ${page.name}: ${REQUESTS} requests after ${WARM_UP_REQUESTS} not counted, ${readers} concurrent readers, ${perSecond.toFixed(0)} requests/s, ${failures} failures (load average ${loadAverage} before; cores busy ${(busy * 100).toFixed(0)} %, steal ${(steal * 100).toFixed(1)} %; load generator ${generatorMs.toFixed(2)} ms of CPU per request)`);
        console.log(`  p50 ${at(0.5).toFixed(1)} ms   p95 ${p95.toFixed(1)} ms   p99 ${at(0.99).toFixed(1)} ms   max ${latencies[latencies.length - 1].toFixed(1)} ms   target p95 <= 200 ms: ${p95 <= 200 ? 'met' : 'NOT MET'}`);
      }
    }
  }
} finally {
  await Promise.all(servers.map(async (server) => {
    const exited = new Promise((resolve) => server.once('exit', resolve));
    server.kill('SIGTERM');
    await exited;
  }));
  destroyCluster(cluster);
}
