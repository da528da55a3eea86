// `npm run db:restore -- --file path [--port n --data-root dir]`: loads a backup made by
// `npm run db:backup` into a cluster whose Crossgrain database is still empty (a fresh
// cluster is created, with its roles and database, when the folder holds none). It
// refuses a database that already holds tables, and restores in one transaction: a
// file that is not a backup, or any error, changes nothing.
import { closeSync, existsSync, openSync } from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { backupOptions } from './lib/backupOptions.mjs';
import { step } from './lib/system.mjs';
import { clusterSettings, runClusterTool, startCluster, stopCluster } from '../db/scripts/postgres.mjs';

const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..');
const options = backupOptions(root);
const fail = (message) => {
  console.error(message);
  process.exit(1);
};
if (!options.file) fail('Name the backup to restore: npm run db:restore -- --file path/to/crossgrain.dump');
if (!existsSync(options.file)) fail(`No backup file at ${options.file}.`);
const { database } = clusterSettings(options.cluster);

const { startedHere } = startCluster(options.cluster);
const finish = (code) => {
  if (startedHere) stopCluster(options.cluster);
  process.exit(code);
};
const count = runClusterTool('psql', ['-X', '-A', '-t', '-d', database, '-c',
  "SELECT count(*) FROM pg_tables WHERE schemaname NOT IN ('pg_catalog', 'information_schema')"], { encoding: 'utf8' }, options.cluster);
if (count.status !== 0) {
  console.error(`Could not inspect database ${database}: ${count.stderr}`);
  finish(1);
}
if (Number(count.stdout.trim()) > 0) {
  console.error(`Database ${database} already holds ${count.stdout.trim()} tables; nothing was changed. ` +
    'Restore into a fresh cluster (another --data-root and --port), or remove this one first (node db/scripts/postgres.mjs destroy).');
  finish(1);
}
step(`Restoring ${options.file} into database ${database}`);
const input = openSync(options.file, 'r');
const result = runClusterTool('pg_restore', ['--single-transaction', '--exit-on-error', '--no-password', '-d', database], {
  stdio: [input, 'inherit', 'pipe'], encoding: 'utf8',
}, options.cluster);
closeSync(input);
if (result.status !== 0) {
  console.error(`The restore failed and was rolled back; nothing was changed: ${result.stderr || result.error}`);
  finish(1);
}
step('Restore complete. Before use, check the audit trail against the latest checkpoint kept outside the database: npm run -s audit:checkpoint -- --verify checkpoints.jsonl');
finish(0);
