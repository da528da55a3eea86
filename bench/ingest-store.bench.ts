/**
 * Extract storage benchmark (issue targets, measured, not asserted):
 * - ingest of a generated 1,000,000-row, 12-column CSV (parse, screen, profile, store in
 *   PostgreSQL) at most 4 × the time `psql \copy` takes for the same file into a plain table;
 * - peak memory of the ingesting process at most 500 MB;
 * - loading the 6 columns of an analysis into the engine's typed arrays in at most 1 s.
 * Runs against its own throwaway cluster (port 54359, .data/bench), removed at the end.
 */
import { spawnSync } from 'node:child_process';
import { mkdtemp, rm, stat } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { fileURLToPath } from 'node:url';

const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..');
const port = 54359;
const dataRoot = path.join(root, '.data', 'bench');
Object.assign(process.env, { CROSSGRAIN_DB_PORT: String(port), CROSSGRAIN_ENV: 'test', CROSSGRAIN_DATA_DIR: dataRoot });
const rows = Number(process.argv.slice(2).find((a) => /^\d+$/.test(a)) ?? 1_000_000);

const { startCluster, destroyCluster, postgresBinaries } = await import('../db/scripts/postgres.mjs');
const cluster = { port, dataRoot };
const settings = startCluster(cluster);
const env = { ...process.env };
try {
  const migrate = spawnSync('npx', ['tsx', 'db/migrate.ts', 'up'], { cwd: root, env, encoding: 'utf8' });
  if (migrate.status !== 0) throw new Error(migrate.stderr);
  const { ownerDb, makeUser, makeInitiative, addMember, closeOwnerDb } = await import('../tests/support/factories');
  const { generateSyntheticExtract, SYNTHETIC_HEADER } = await import('./support/syntheticExtract');
  const user = await makeUser();
  const initiative = await makeInitiative('Benchmark initiative (synthetic)');
  await addMember(initiative.id, user.id, 'analyst');

  const dir = await mkdtemp(path.join(tmpdir(), 'crossgrain-store-bench-'));
  const file = path.join(dir, 'extract.csv');
  await generateSyntheticExtract(file, rows);
  const { size } = await stat(file);

  // psql \copy into a plain table with the same 12 columns.
  const columns = SYNTHETIC_HEADER.split(',').map((c) => `${c} text`).join(', ');
  await ownerDb().query(`DROP TABLE IF EXISTS bench_plain; CREATE TABLE bench_plain (${columns})`);
  const psql = path.join(postgresBinaries(), 'psql');
  const copyStart = performance.now();
  const copy = spawnSync(psql, ['-X', '-q', '-h', '127.0.0.1', '-p', String(port), '-U', settings.ownerUser, '-d', settings.database,
    '-c', `\\copy bench_plain FROM '${file}' WITH (FORMAT csv, HEADER true)`], { env: { ...env, PGPASSWORD: settings.ownerPassword }, encoding: 'utf8' });
  const copySeconds = (performance.now() - copyStart) / 1000;
  if (copy.status !== 0) throw new Error(copy.stderr);
  await ownerDb().query('DROP TABLE bench_plain');

  const once = spawnSync(process.execPath, [...process.execArgv, path.join(root, 'bench/support/ingestOnce.ts'), file, user.id, initiative.id], {
    cwd: root, env, encoding: 'utf8',
  });
  if (once.status !== 0) throw new Error(once.stderr);
  const ingest = JSON.parse(once.stdout.trim().split('\n').pop() ?? '{}');

  const { withIdentity, sequelize } = await import('@/lib/server/db');
  const { loadColumns } = await import('@/features/extracts/columns.server');
  const { toEngineData } = await import('@/features/extracts/engineData');
  const names = ['readmitted_30d', 'call_back', 'age_band', 'sex', 'comorbidity_score', 'prior_admissions'];
  const roles = { readmitted_30d: 'continuous', call_back: 'categorical', age_band: 'categorical', sex: 'categorical', comorbidity_score: 'continuous', prior_admissions: 'continuous' } as const;
  const loads: number[] = [];
  for (let i = 0; i < 3; i += 1) {
    const t0 = performance.now();
    const loaded = await withIdentity(user.id, (t) => loadColumns(t, ingest.versionId, names));
    const data = toEngineData(loaded.rowCount, loaded.columns, roles);
    loads.push((performance.now() - t0) / 1000);
    if (data.rowCount !== rows) throw new Error(`loaded ${data.rowCount} rows, expected ${rows}`);
  }
  await sequelize.close();
  await closeOwnerDb();
  await rm(dir, { recursive: true, force: true });

  const load = Math.min(...loads);
  const ratio = ingest.totalSeconds / copySeconds;
  const line = (label: string, value: string, target: string, ok: boolean) =>
    console.log(`${label.padEnd(52)} ${value.padStart(12)}   target ${target.padEnd(14)} ${ok ? 'met' : 'NOT MET'}`);
  console.log(`ingest-store: ${rows.toLocaleString('en-US')} rows x 12 columns, ${(size / 1e6).toFixed(1)} MB`);
  line('psql \\copy into a plain table', `${copySeconds.toFixed(2)} s`, '(reference)', true);
  line(`ingest: read ${ingest.readSeconds.toFixed(2)} s, screen+profile ${ingest.reviewSeconds.toFixed(2)} s, store ${ingest.storeSeconds.toFixed(2)} s`, `${ingest.totalSeconds.toFixed(2)} s`, '', true);
  line('ingest / psql \\copy', `${ratio.toFixed(2)} x`, '<= 4 x', ratio <= 4);
  line('peak memory of the ingesting process', `${Math.round(ingest.peakRssMb)} MB`, '<= 500 MB', ingest.peakRssMb <= 500);
  line('load 6 columns into typed arrays (best of 3)', `${load.toFixed(3)} s`, '<= 1 s', load <= 1);
} finally {
  destroyCluster(cluster);
}
