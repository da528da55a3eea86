// `npm run engine`: runs the engine command (src/features/runs/engineCommand.ts) from a
// bundle built ahead of time under .build/engine/, so that nothing is compiled at start.
// The bundle (and the worker entries beside it, the engine's two and the command's own
// helper, which are found next to the module that starts them) is rebuilt with esbuild when
// it is missing or older than any of the files it was built from (their list is kept in
// inputs.json), or than package-lock.json.
//
// The command's bundle is a CommonJS script run through node:vm with V8's code cache
// (engineCommand.cjs.cache, written by the first run after a build and used only with the
// exact bundle text and Node version it was made from), so that later starts skip most of
// the parsing and compiling of the bundle's functions. Node 20 has no code cache for ES
// modules; the workers stay ES modules.
//
// `npm run -s engine -- --write-schemas` regenerates src/engine/boundary/spec.schema.json
// and result.schema.json from the zod schemas (run from the TypeScript sources).
import { spawnSync } from 'node:child_process';
import { createHash } from 'node:crypto';
import { mkdirSync, readFileSync, renameSync, rmSync, statSync, writeFileSync } from 'node:fs';
import { Module, createRequire } from 'node:module';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { Script } from 'node:vm';

const root = fileURLToPath(new URL('..', import.meta.url));
const outdir = join(root, '.build', 'engine');
const bundle = join(outdir, 'engineCommand.cjs');
const codeCache = join(outdir, 'engineCommand.cjs.cache');
const inputsFile = join(outdir, 'inputs.json');

const workerEntryPoints = {
  passWorker: 'src/engine/threads/passWorker.ts',
  bootstrapWorker: 'src/engine/bootstrap/bootstrapWorker.ts',
  csvPartWorker: 'src/features/runs/csvPartWorker.ts',
};
const workerFiles = Object.keys(workerEntryPoints).map((name) => `${name}.js`);
const outputs = ['engineCommand.cjs', ...workerFiles].map((name) => join(outdir, name));

function modified(path) {
  try {
    return statSync(path).mtimeMs;
  } catch {
    return Number.NaN;
  }
}

/** Whether the bundle is missing or older than one of its sources. */
export function stale() {
  const built = Math.min(...outputs.map(modified));
  if (Number.isNaN(built)) return true;
  let inputs;
  try {
    inputs = JSON.parse(readFileSync(inputsFile, 'utf8'));
  } catch {
    return true;
  }
  // A source that is gone or newer than the bundle means a rebuild (NaN > built is false, so test both).
  return [...inputs, 'package-lock.json'].some((input) => {
    const time = modified(join(root, input));
    return Number.isNaN(time) || time > built;
  });
}

/**
 * Bundles the command and the worker entries into .build/engine/. They are built in a
 * folder of this process's own and then renamed into place one by one (the command last),
 * so that a command started meanwhile, or a second build, never reads a half-written file.
 */
export async function buildEngineCommand() {
  const { build } = await import('esbuild');
  const scratch = join(root, '.build', `engine.${process.pid}`);
  try {
    await buildInto(build, scratch);
  } finally {
    rmSync(scratch, { recursive: true, force: true });
  }
}

/**
 * zod's translations of its messages (a third of the bundle) are left out: the command only
 * ever uses zod's English messages, which are registered apart from them. Without this the
 * namespace import pulls every locale in, and Node parses them at every start.
 */
const withoutZodLocales = {
  name: 'without-zod-locales',
  setup(build) {
    build.onResolve({ filter: /^\.\.\/locales\/index\.js$/ }, (args) =>
      /[\\/]zod[\\/]v4[\\/](classic|core)[\\/]/.test(args.importer) ? { path: 'zod-locales', namespace: 'without-zod-locales' } : undefined,
    );
    build.onLoad({ filter: /.*/, namespace: 'without-zod-locales' }, () => ({ contents: 'export {};', loader: 'js' }));
  },
};

async function buildInto(build, scratch) {
  const common = {
    absWorkingDir: root,
    outdir: scratch,
    bundle: true,
    platform: 'node',
    target: 'node20',
    metafile: true,
    // Smaller to parse at start; names are kept for error messages.
    minify: true,
    keepNames: true,
    logLevel: 'warning',
    plugins: [withoutZodLocales],
  };
  const command = await build({
    ...common,
    entryPoints: { engineCommand: 'src/features/runs/engineCommand.ts' },
    format: 'cjs',
    outExtension: { '.js': '.cjs' },
    // Strict, as the ES modules it is made from; import.meta.url (where the workers are
    // found) is the bundle's own URL.
    define: { 'import.meta.url': '__engineModuleUrl' },
    banner: { js: "'use strict';var __engineModuleUrl=require('node:url').pathToFileURL(__filename).href;" },
  });
  const workers = await build({
    ...common,
    entryPoints: workerEntryPoints,
    format: 'esm',
    // CommonJS packages in the bundle (jstat) may call require for Node's modules.
    banner: { js: "import { createRequire as __engineRequire } from 'node:module'; const require = __engineRequire(import.meta.url);" },
  });
  // Files only: the empty stand-in for zod's translations is no file to watch.
  const inputs = [...new Set([...Object.keys(command.metafile.inputs), ...Object.keys(workers.metafile.inputs)])].filter(
    (input) => !input.startsWith(`${withoutZodLocales.name}:`),
  );
  writeFileSync(join(scratch, 'inputs.json'), `${JSON.stringify(inputs.sort(), null, 1)}\n`);
  mkdirSync(outdir, { recursive: true });
  for (const name of [...workerFiles, 'inputs.json']) renameSync(join(scratch, name), join(outdir, name));
  rmSync(codeCache, { force: true });
  renameSync(join(scratch, 'engineCommand.cjs'), bundle);
}

/**
 * Runs the command's bundle with V8's code cache: the cache file starts with a SHA-256 of
 * the bundle's text and Node's version and is used only when both match (V8 checks its
 * own version and flags besides). A run without a usable cache writes one as it exits,
 * with the functions the run compiled; a cache that cannot be written is simply not kept.
 */
function runBundle() {
  const source = readFileSync(bundle, 'utf8');
  const identity = createHash('sha256').update(source).update(process.version).digest();
  let cachedData;
  try {
    const file = readFileSync(codeCache);
    if (file.length > identity.length && file.subarray(0, identity.length).equals(identity)) cachedData = file.subarray(identity.length);
  } catch {
    // No cache yet.
  }
  const script = new Script(Module.wrap(source), { filename: bundle, cachedData });
  if (cachedData === undefined || script.cachedDataRejected) {
    process.once('exit', () => {
      const scratch = `${codeCache}.${process.pid}`;
      try {
        writeFileSync(scratch, Buffer.concat([identity, script.createCachedData()]));
        renameSync(scratch, codeCache);
      } catch {
        rmSync(scratch, { force: true });
      }
    });
  }
  const module = { exports: {} };
  script.runInThisContext()(module.exports, createRequire(bundle), module, bundle, outdir);
}

// Run as a script (not imported): `--build-only` builds and stops; otherwise build when stale and run.
if (process.argv[1] === fileURLToPath(import.meta.url)) {
  const args = process.argv.slice(2);
  if (args.includes('--write-schemas')) {
    const tsx = join(root, 'node_modules', '.bin', 'tsx');
    const status = spawnSync(tsx, [join(root, 'src/engine/boundary/writeSchemas.ts')], { stdio: 'inherit' }).status;
    process.exit(status ?? 1);
  }
  if (args.includes('--build-only')) await buildEngineCommand();
  else {
    if (stale()) await buildEngineCommand();
    runBundle();
  }
}
