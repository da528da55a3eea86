/**
 * Global setup of the `app` test project. `npm test` has already started the throwaway
 * cluster and migrated it; when a developer runs `npx vitest` directly, this starts and
 * migrates the cluster itself and removes it afterwards.
 */
import { spawnSync } from 'node:child_process';
import { startCluster, destroyCluster } from '../../db/scripts/postgres.mjs';
import { testEnvironment, testSettings } from '../../scripts/lib/testEnv.mjs';

export default function setup(): () => void {
  const ownedByUs = process.env.CROSSGRAIN_ENV !== 'test';
  Object.assign(process.env, testEnvironment());
  if (!ownedByUs) return () => {};
  const cluster = { port: testSettings.dbPort, dataRoot: testSettings.dataRoot };
  const { startedHere } = startCluster(cluster);
  const migrate = spawnSync('npx', ['tsx', 'db/migrate.ts', 'up'], { cwd: testSettings.root, env: process.env, stdio: 'inherit' });
  if (migrate.status !== 0) throw new Error('Migrating the test database failed');
  // Only remove a cluster this run started: another run may be using one already there.
  return () => {
    if (startedHere) destroyCluster(cluster);
  };
}
