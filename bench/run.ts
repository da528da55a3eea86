/**
 * Runs every bench/*.bench.ts in turn, each in its own Node process (so that each reports
 * its own peak memory), and passes their output through. Benchmarks print figures; they
 * are not timed tests. Usage: npm run bench [-- NAME ...] to run only files whose name
 * contains one of the given words.
 */
import { spawnSync } from 'node:child_process';
import { readdirSync } from 'node:fs';
import { fileURLToPath } from 'node:url';

const folder = fileURLToPath(new URL('.', import.meta.url));
const filters = process.argv.slice(2);
const files = readdirSync(folder)
  .filter((name) => name.endsWith('.bench.ts'))
  .filter((name) => filters.length === 0 || filters.some((filter) => name.includes(filter)))
  .sort();

let failed = 0;
for (const name of files) {
  process.stdout.write(`\n=== ${name} ===\n`);
  const result = spawnSync(process.execPath, [...process.execArgv, `${folder}${name}`], { stdio: 'inherit' });
  if (result.status !== 0) {
    failed++;
    process.stdout.write(`${name} exited with status ${result.status}\n`);
  }
}
if (files.length === 0) process.stdout.write('no bench/*.bench.ts files found\n');
process.exit(failed > 0 ? 1 : 0);
