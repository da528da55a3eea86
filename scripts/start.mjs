// `npm start`: installs what is missing, starts PostgreSQL on loopback, migrates, loads
// the demo data once, builds, and serves Crossgrain with its fake mail server and job
// worker beside it. A child that ends on its own (a crash) is started again with a
// growing delay and the reason is logged; PostgreSQL keeps running meanwhile. Ctrl-C
// stops everything, the database included.
// `npm run dev` does the same with Astro's hot-reloading development server.
import { spawnSync } from 'node:child_process';
import { existsSync, mkdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { ensureNodeModules, run, signalGroup, startChild, step } from './lib/system.mjs';
import { supervise } from './lib/supervise.mjs';

const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..');
const dev = process.argv.includes('--dev');
const host = process.env.HOST ?? '127.0.0.1';
const port = Number(process.env.PORT ?? 4321);
const runDir = path.join(root, '.data', 'run');
const env = { ...process.env, ASTRO_TELEMETRY_DISABLED: '1', HOST: host, PORT: String(port) };

/** Ends processes a previous start left behind (after a SIGKILL, say), by their pid files. */
function endLeftovers() {
  if (!existsSync(runDir)) return;
  for (const name of ['app', 'mail', 'worker']) {
    const file = path.join(runDir, `${name}.pid`);
    if (!existsSync(file)) continue;
    const pid = Number(readFileSync(file, 'utf8'));
    if (signalGroup(pid, 0)) {
      step(`Ending the ${name} processes (group ${pid}) that a previous start left running`);
      signalGroup(pid, 'SIGTERM');
      waitForGroupToEnd(pid);
    }
    rmSync(file, { force: true });
  }
}

/** Waits up to 5 s for a process group to end, then kills what is left of it. */
function waitForGroupToEnd(pid) {
  const until = Date.now() + 5000;
  while (Date.now() < until && signalGroup(pid, 0)) spawnSync('sleep', ['0.1']);
  if (signalGroup(pid, 0)) signalGroup(pid, 'SIGKILL');
}

ensureNodeModules(root);
const { startCluster, stopCluster } = await import('../db/scripts/postgres.mjs');
mkdirSync(runDir, { recursive: true });
endLeftovers();
const supervised = [];
function launch(name, command, args, extraEnv = {}) {
  const pidFile = path.join(runDir, `${name}.pid`);
  const handle = supervise({
    name,
    start: () => {
      const child = startChild(name, command, args, { cwd: root, env: { ...env, ...extraEnv } });
      child.once('exit', () => rmSync(pidFile, { force: true }));
      return child;
    },
    onStart: (child) => writeFileSync(pidFile, String(child.pid)),
    // Each child leads its own process group (npx, tsx, worker threads): stop all of it.
    kill: (child, signal) => signalGroup(child.pid, signal),
    log: step,
  });
  supervised.push(handle);
  return handle;
}

let stopping = false;
/** Stops the children (TERM, then KILL after a grace period), then the database. */
async function shutdown(code = 0) {
  if (stopping) return;
  stopping = true;
  step('Stopping');
  await Promise.all(supervised.map((handle) => handle.stop(3000)));
  stopCluster();
  process.exit(code);
}
process.on('SIGINT', () => shutdown(0));
process.on('SIGTERM', () => shutdown(0));

// The mail server first, so that mail the demo seed sends (notifications of the demo
// review) reaches the local outbox.
const MAIL_SERVER = 'src/lib/server/mailServer.ts';
if (existsSync(path.join(root, MAIL_SERVER))) launch('mail', 'npx', ['tsx', MAIL_SERVER]);
startCluster();
step('Migrating the database');
run('npx', ['tsx', 'db/migrate.ts', 'up'], { cwd: root, env });
step('Loading the demo data (once)');
run('npx', ['tsx', 'db/seed.ts'], { cwd: root, env });
if (!dev) {
  step('Building the app');
  run('npx', ['astro', 'build', '--silent'], { cwd: root, env });
}


launch('worker', 'npx', ['tsx', 'src/features/runs/runWorker.ts']);
if (dev) launch('app', 'npx', ['astro', 'dev', '--host', host, '--port', String(port)]);
// The built app serves with React's production build (NODE_ENV), as any deployment should,
// one process per core (scripts/serve.mjs).
else launch('app', process.execPath, [path.join(root, 'scripts/serve.mjs')], { NODE_ENV: 'production' });

const demo = JSON.parse(readFileSync(path.join(root, 'db/seeds/demo.json'), 'utf8'));
step(`Crossgrain is running at http://${host}:${port}  (Ctrl-C stops it)`);
console.log(`\n  Demo accounts (synthetic data; password for all: ${demo.password})`);
for (const user of demo.users) console.log(`    ${`${user.local}@${demo.domain}`.padEnd(32)} ${user.summary}`);
console.log('');
