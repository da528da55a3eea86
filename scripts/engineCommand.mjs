// `npm run engine`: runs the engine command (src/features/runs/engineCommand.ts) from a
// bundle built ahead of time under .build/engine/, so that nothing is compiled at start.
// The bundle (and the engine's two worker entries beside it, which the engine finds next to
// the module that starts them) is rebuilt with esbuild when it is missing or older than any
// of the files it was built from (their list is kept in inputs.json), or than package-lock.json.
//
// `npm run -s engine -- --write-schemas` regenerates src/engine/boundary/spec.schema.json
// and result.schema.json from the zod schemas (run from the TypeScript sources).
import { spawnSync } from 'node:child_process';
import { mkdirSync, readFileSync, renameSync, rmSync, statSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';

const root = fileURLToPath(new URL('..', import.meta.url));
const outdir = join(root, '.build', 'engine');
const bundle = join(outdir, 'engineCommand.mjs');
const inputsFile = join(outdir, 'inputs.json');

const entryPoints = {
  engineCommand: 'src/features/runs/engineCommand.ts',
  passWorker: 'src/engine/threads/passWorker.ts',
  bootstrapWorker: 'src/engine/bootstrap/bootstrapWorker.ts',
};
const outputs = ['engineCommand.mjs', 'passWorker.js', 'bootstrapWorker.js'].map((name) => join(outdir, name));

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

async function buildInto(build, scratch) {
  const result = await build({
    absWorkingDir: root,
    entryPoints,
    outdir: scratch,
    bundle: true,
    platform: 'node',
    format: 'esm',
    target: 'node20',
    metafile: true,
    // Smaller to parse at start; names are kept for error messages.
    minify: true,
    keepNames: true,
    logLevel: 'warning',
    // CommonJS packages in the bundle (jstat) may call require for Node's modules.
    banner: { js: "import { createRequire as __engineRequire } from 'node:module'; const require = __engineRequire(import.meta.url);" },
  });
  writeFileSync(join(scratch, 'inputs.json'), `${JSON.stringify(Object.keys(result.metafile.inputs).sort(), null, 1)}\n`);
  mkdirSync(outdir, { recursive: true });
  for (const name of ['passWorker.js', 'bootstrapWorker.js', 'inputs.json']) renameSync(join(scratch, name), join(outdir, name));
  renameSync(join(scratch, 'engineCommand.js'), bundle);
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
    await import(pathToFileURL(bundle).href);
  }
}
