// `npm run db:backup [-- --file path]`: a full copy of the Crossgrain database (tables,
// audit trail, job queue, stored extracts) in PostgreSQL's custom format, taken with
// pg_dump from the local cluster (started for the purpose if it is not running, and
// stopped again). The copy is consistent: pg_dump reads one snapshot while the app runs.
// Without --file it goes to .data/backups/crossgrain-<UTC time>.dump.
// Restore it with `npm run db:restore -- --file path` (scripts/restore.mjs).
import { closeSync, mkdirSync, openSync, renameSync, rmSync, statSync } from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { backupOptions } from './lib/backupOptions.mjs';
import { step } from './lib/system.mjs';
import { clusterSettings, runClusterTool, startCluster, stopCluster } from '../db/scripts/postgres.mjs';

const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..');
const options = backupOptions(root);
const stamp = new Date().toISOString().replace(/[-:]/g, '').replace(/\.\d+Z$/, 'Z');
const file = options.file ?? path.join(options.dataRoot, 'backups', `crossgrain-${stamp}.dump`);
const { database } = clusterSettings(options.cluster);

const { startedHere } = startCluster(options.cluster);
mkdirSync(path.dirname(file), { recursive: true });
// Written under a temporary name and renamed when complete: a failed dump leaves no file.
const partial = `${file}.partial`;
const out = openSync(partial, 'w', 0o600);
step(`Backing up database ${database} to ${file}`);
const result = runClusterTool('pg_dump', ['--format=custom', '--compress=6', '--no-password', database], {
  stdio: ['ignore', out, 'pipe'], encoding: 'utf8',
}, options.cluster);
closeSync(out);
if (startedHere) stopCluster(options.cluster);
if (result.status !== 0) {
  rmSync(partial, { force: true });
  console.error(`The backup failed, and no file was written: ${result.stderr || result.error}`);
  process.exit(1);
}
renameSync(partial, file);
step(`Backup complete: ${file} (${(statSync(file).size / 1024).toFixed(0)} KiB). Keep it as you keep the cohort extracts: it holds them.`);
