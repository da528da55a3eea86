/**
 * Upload memory benchmark (issue 13, measured, not asserted): streams a generated 200 MB
 * CSV (seeded synthetic data) to the built server as one `text/csv` upload and samples the
 * server's resident memory (VmRSS from /proc) every 50 ms, from before the upload until the
 * extract is stored. Target: the server stays under about 300 MB whatever the upload's size.
 * Uses its own cluster (port 54371, .data/bench-upload) and the built server (built first
 * when dist/ is missing), both removed or stopped at the end.
 * CROSSGRAIN_BENCH_UPLOAD_MB sets the size (default 200).
 */
import { spawn, spawnSync } from 'node:child_process';
import { existsSync, readFileSync } from 'node:fs';
import http from 'node:http';
import path from 'node:path';
import { fileURLToPath } from 'node:url';

const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..');
const dbPort = 54371;
const appPort = 4341;
const dataRoot = path.join(root, '.data', 'bench-upload');
Object.assign(process.env, {
  CROSSGRAIN_DB_PORT: String(dbPort), CROSSGRAIN_ENV: 'test', CROSSGRAIN_DATA_DIR: dataRoot, CROSSGRAIN_SMTP_PORT: '2541',
});
const megabytes = Number(process.env.CROSSGRAIN_BENCH_UPLOAD_MB ?? 200);
const targetBytes = megabytes * 1024 * 1024;

/** A seeded stream of CSV chunks (about 64 KB each) of plausible, screen-passing columns. */
function* syntheticCsv(bytes: number): Generator<Buffer> {
  let state = 20261202;
  const random = () => {
    state = (state * 1103515245 + 12345) % 2147483648;
    return state / 2147483648;
  };
  const wards = ['North', 'South', 'East', 'West', 'Harbour', 'Fen'];
  const bands = ['18-44', '45-64', '65-79', '80-89'];
  let sent = 0;
  let chunk = 'ward,age_band,treated,readmitted,length_of_stay,frailty_score\n';
  while (sent < bytes) {
    while (chunk.length < 65_536) {
      chunk += `${wards[Math.floor(random() * wards.length)]},${bands[Math.floor(random() * bands.length)]},${random() < 0.5 ? 1 : 0},${random() < 0.2 ? 1 : 0},${(1 + random() * 20).toFixed(1)},${(random() * 9).toFixed(3)}\n`;
    }
    const buffer = Buffer.from(chunk);
    sent += buffer.length;
    chunk = '';
    yield buffer;
  }
}

/** CPU seconds (user + system) the process has used, from /proc (clock ticks of 1/100 s). */
function cpuSeconds(pid: number): number {
  const fields = readFileSync(`/proc/${pid}/stat`, 'utf8').split(') ')[1].split(' ');
  return (Number(fields[11]) + Number(fields[12])) / 100;
}

function rssMegabytes(pid: number): number {
  const status = readFileSync(`/proc/${pid}/status`, 'utf8');
  const kilobytes = Number(/VmRSS:\s+(\d+)/.exec(status)?.[1] ?? 0);
  return kilobytes / 1024;
}

const { startCluster, destroyCluster } = await import('../db/scripts/postgres.mjs');
const cluster = { port: dbPort, dataRoot };
startCluster(cluster);
const env = { ...process.env };
let server: ReturnType<typeof spawn> | null = null;
try {
  if (spawnSync('npx', ['tsx', 'db/migrate.ts', 'up'], { cwd: root, env }).status !== 0) throw new Error('migration failed');
  if (!existsSync(path.join(root, 'dist/server/entry.mjs'))) spawnSync('npx', ['astro', 'build', '--silent'], { cwd: root, env, stdio: 'inherit' });
  const { seedDemo } = await import('../db/seed');
  const { ownerDb, closeOwnerDb } = await import('../tests/support/factories');
  const { QueryTypes } = await import('sequelize');
  await seedDemo(ownerDb());
  const [initiative] = await ownerDb().query<{ id: string }>("SELECT id FROM initiatives WHERE slug = 'call-back-72h'", { type: QueryTypes.SELECT });
  await closeOwnerDb();

  server = spawn(process.execPath, [path.join(root, 'scripts/serve.mjs')], {
    cwd: root, env: { ...env, HOST: '127.0.0.1', PORT: String(appPort), LOG_LEVEL: 'warn', CROSSGRAIN_APP_PROCESSES: '1' }, stdio: 'ignore',
  });
  const base = `http://127.0.0.1:${appPort}`;
  for (let i = 0; i < 100; i += 1) {
    try {
      if ((await fetch(`${base}/api/health`)).ok) break;
    } catch { /* not up yet */ }
    await new Promise((resolve) => setTimeout(resolve, 100));
  }
  const signIn = await fetch(`${base}/api/auth/sign-in`, {
    method: 'POST', headers: { 'Content-Type': 'application/json' },
    body: JSON.stringify({ email: 'analyst@tern-valley.example', password: 'tern-valley-demo' }),
  });
  if (signIn.status !== 204) throw new Error(`sign-in failed: ${signIn.status}`);
  const cookie = signIn.headers.getSetCookie()[0].split(';')[0];
  const pid = server.pid!;
  const before = rssMegabytes(pid);
  const cpuBefore = cpuSeconds(pid);
  let peak = before;
  const sampler = setInterval(() => {
    peak = Math.max(peak, rssMegabytes(pid));
  }, 50);

  const started = performance.now();
  const answer = await new Promise<{ status: number; body: string }>((resolve, reject) => {
    const request = http.request(`${base}/api/initiatives/${initiative.id}/extracts?name=Memory%20bench`, {
      method: 'POST', headers: { 'Content-Type': 'text/csv', Cookie: cookie },
    }, (response) => {
      let body = '';
      response.setEncoding('utf8');
      response.on('data', (part: string) => { body += part; });
      response.on('end', () => resolve({ status: response.statusCode ?? 0, body }));
    });
    request.on('error', reject);
    const chunks = syntheticCsv(targetBytes);
    const pump = () => {
      for (let next = chunks.next(); !next.done; next = chunks.next()) {
        if (!request.write(next.value)) {
          request.once('drain', pump);
          return;
        }
      }
      request.end();
    };
    pump();
  });
  const received = (performance.now() - started) / 1000;
  const peakWhileReceiving = peak;
  if (answer.status !== 202) throw new Error(`upload answered ${answer.status}: ${answer.body}`);
  const { extractId } = JSON.parse(answer.body) as { extractId: string };
  let state = 'processing';
  for (let i = 0; i < 1200 && state === 'processing'; i += 1) {
    await new Promise((resolve) => setTimeout(resolve, 250));
    const response = await fetch(`${base}/api/extracts/${extractId}`, { headers: { Cookie: cookie } });
    const text = await response.text();
    state = response.status === 200 && !/"status":"processing"/.test(text) ? 'done' : 'processing';
  }
  clearInterval(sampler);
  const total = (performance.now() - started) / 1000;
  const cpu = cpuSeconds(pid) - cpuBefore;
  console.log(`upload-memory: ${megabytes} MB CSV streamed to the built server; received in ${received.toFixed(1)} s, stored after ${total.toFixed(1)} s (${state})`);
  console.log(`${'rss before'.padEnd(12)} ${before.toFixed(0).padStart(6)} MB`);
  console.log(`${'rss receiving'.padEnd(12)} ${peakWhileReceiving.toFixed(0).padStart(6)} MB   (peak until the 202 answer: reading and typing the columns)`);
  console.log(`${'rss peak'.padEnd(12)} ${peak.toFixed(0).padStart(6)} MB   target < 300 MB   ${peak < 300 ? 'met' : 'NOT MET'}`);
  console.log(`${'server cpu'.padEnd(12)} ${cpu.toFixed(1).padStart(6)} s    (user + system of the app server from the upload until stored; PostgreSQL not counted)`);
} finally {
  if (server) {
    const exited = new Promise((resolve) => server?.once('exit', resolve));
    server.kill('SIGTERM');
    await exited;
  }
  destroyCluster(cluster);
}
