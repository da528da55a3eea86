// `npm test`: installs what is missing (npm packages; Debian's PostgreSQL, Chromium, R and
// statsmodels), builds the app, starts a throwaway PostgreSQL cluster on its own port and
// folder, runs every vitest project (unit, database, reference and browser tests), and
// removes the cluster afterwards, whatever the outcome.
import { spawnSync } from 'node:child_process';
import { mkdirSync } from 'node:fs';
import { ensureDebianPackages, ensureNodeModules, run, step } from './lib/system.mjs';
import { testEnvironment, testSettings } from './lib/testEnv.mjs';

const { root } = testSettings;
const extraArgs = process.argv.slice(2);

ensureNodeModules(root);
ensureDebianPackages({
  postgresql: '/usr/lib/postgresql/*/bin/pg_ctl',
  chromium: '/usr/bin/chromium',
  'r-base-core': '/usr/bin/Rscript',
  'python3-statsmodels': '/usr/lib/python3/dist-packages/statsmodels',
  // pdftotext and pdffonts read the briefs' PDFs in tests/api/briefs.test.ts.
  'poppler-utils': '/usr/bin/pdftotext',
});

const { startCluster, destroyCluster } = await import('../db/scripts/postgres.mjs');
const env = { ...process.env, ...testEnvironment() };
Object.assign(process.env, testEnvironment());
const cluster = { port: testSettings.dbPort, dataRoot: testSettings.dataRoot };
mkdirSync(testSettings.artifacts, { recursive: true });

let status = 1;
try {
  destroyCluster(cluster);
  startCluster(cluster);
  step('Migrating the test database');
  run('npx', ['tsx', 'db/migrate.ts', 'up'], { cwd: root, env });
  step('Building the app for the browser tests');
  run('npx', ['astro', 'build', '--silent'], { cwd: root, env });
  step('Running the test suite (vitest)');
  const result = spawnSync('npx', ['vitest', 'run', ...extraArgs], { cwd: root, env, stdio: 'inherit' });
  status = result.status ?? 1;
} catch (error) {
  console.error(error instanceof Error ? error.message : error);
  status = 1;
} finally {
  step('Removing the throwaway PostgreSQL cluster');
  destroyCluster(cluster);
}
step(status === 0 ? 'All tests passed.' : `Tests failed (exit ${status}).`);
process.exit(status);
