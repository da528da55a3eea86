/**
 * Serves the built app: one process per core (CROSSGRAIN_APP_PROCESSES, default the
 * machine's available parallelism, at most 8), sharing one port through node:cluster, so
 * that page rendering uses every core. Each process is the same stateless app server
 * (sessions, runs and files live in PostgreSQL; each keeps its own cache of finished
 * results). A process that ends is started again after a second; SIGTERM or SIGINT stops
 * them all.
 */
import cluster from 'node:cluster';
import { availableParallelism } from 'node:os';
import path from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';

const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..');
const entry = pathToFileURL(path.join(root, 'dist/server/entry.mjs')).href;
const asked = Number(process.env.CROSSGRAIN_APP_PROCESSES ?? availableParallelism());
const processes = Number.isInteger(asked) && asked >= 1 ? Math.min(asked, 8) : 1;

if (cluster.isPrimary && processes > 1) {
  let stopping = false;
  const stop = () => {
    stopping = true;
    for (const worker of Object.values(cluster.workers ?? {})) worker?.kill('SIGTERM');
    setTimeout(() => process.exit(0), 3000).unref();
  };
  process.on('SIGTERM', stop);
  process.on('SIGINT', stop);
  cluster.on('exit', (worker, code, signal) => {
    if (stopping) {
      if (Object.keys(cluster.workers ?? {}).length === 0) process.exit(0);
      return;
    }
    console.error(`app process ${worker.process.pid} ended (${signal ?? code}); starting another`);
    setTimeout(() => cluster.fork(), 1000);
  });
  for (let i = 0; i < processes; i += 1) cluster.fork();
} else {
  await import(entry);
}
