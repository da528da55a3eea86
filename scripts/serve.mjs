/**
 * Serves the built app: several processes (CROSSGRAIN_APP_PROCESSES, default one per core
 * but one, at least one, at most 8), sharing one port through node:cluster, so that page
 * rendering uses the cores the database and the worker leave. Each process is the same stateless app server
 * (sessions, runs and files live in PostgreSQL; each keeps its own cache of finished
 * results and kept pages). A process that ends is started again after a second; SIGTERM or
 * SIGINT stops them all. HOST and PORT say where to listen (127.0.0.1:4321 by default).
 *
 * Each process answers the built client files (dist/client: scripts, styles, fonts, the
 * icon) itself, from a list made at start, and hands every other request straight to the
 * app (Astro's handler, built in middleware mode): a page's request never touches the
 * file system first, as Astro's standalone server does for every request.
 */
import cluster from 'node:cluster';
import { readdirSync } from 'node:fs';
import http from 'node:http';
import { availableParallelism } from 'node:os';
import path from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';

const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..');
const entry = pathToFileURL(path.join(root, 'dist/server/entry.mjs')).href;
// One process per core but one: the database, the job worker and the load balancer (or, on one
// machine, everything else `npm start` runs) need a core too. On the 2-core development
// machine one process served the results page at 241 requests/s with 50 readers, two at 191.
const asked = Number(process.env.CROSSGRAIN_APP_PROCESSES ?? Math.max(1, availableParallelism() - 1));
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
  await serveApp();
}

/** Every file under `dir`, as the URL path that names it ('/_astro/x.js'). */
function clientFiles(dir, prefix = '') {
  return readdirSync(dir, { withFileTypes: true }).flatMap((item) =>
    item.isDirectory() ? clientFiles(path.join(dir, item.name), `${prefix}/${item.name}`) : [`${prefix}/${item.name}`]);
}

async function serveApp() {
  const { default: send } = await import('send');
  const { handler } = await import(entry);
  const client = path.join(root, 'dist/client');
  const files = new Set(clientFiles(client));
  const server = http.createServer((req, res) => {
    const urlPath = (req.url ?? '/').split(/[?#]/, 1)[0];
    let name;
    try {
      name = decodeURI(urlPath);
    } catch {
      res.writeHead(400);
      res.end('Bad request.');
      return;
    }
    if ((req.method === 'GET' || req.method === 'HEAD') && files.has(name)) {
      const stream = send(req, name, { root: client });
      // Built assets carry a content hash in their names.
      stream.on('headers', (response) => {
        if (name.startsWith('/_astro/')) response.setHeader('Cache-Control', 'public, max-age=31536000, immutable');
      });
      stream.on('error', (error) => {
        res.statusCode = error.status ?? 500;
        res.end();
      });
      stream.pipe(res);
      return;
    }
    handler(req, res);
  });
  server.listen(Number(process.env.PORT ?? 4321), process.env.HOST ?? '127.0.0.1');
}
