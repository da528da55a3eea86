/**
 * Backup and restore: `npm run db:backup` copies the test database (custom format),
 * `npm run db:restore` loads it into a fresh cluster on its own port and folder, where the
 * audit chain still holds the checkpoint taken before the backup, and a re-run of a run
 * made before the backup reproduces it exactly. A restore onto a database that already
 * holds data, or from a file that is not a backup, is refused and changes nothing.
 */
import { spawnSync } from 'node:child_process';
import { chmodSync, existsSync, mkdtempSync, rmSync, statSync, writeFileSync } from 'node:fs';
import os from 'node:os';
import { createServer } from 'node:net';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { QueryTypes } from 'sequelize';
import { destroyCluster, runClusterTool, startCluster } from '../../db/scripts/postgres.mjs';
import { takeCheckpoint } from '@/features/audit/audit.server';
import { executeRun } from '@/features/runs/executeRun';
import { startRun } from '@/features/runs/runs.server';
import { createAnalysis } from '@/features/analyses/analyses.server';
import { withIdentity } from '@/lib/server/db';
import { testSettings } from '../../scripts/lib/testEnv.mjs';
import { addMember, closeOwnerDb, makeUser, ownerDb } from '../support/factories';
import { CALL_BACK_SPEC, makeWorld, type World } from '../support/runWorld';

const root = path.resolve(import.meta.dirname, '../..');
// Outside the worktree (a new cluster inside it would flood the file watcher), and open
// for the database's system user to enter.
const scratch = mkdtempSync(path.join(os.tmpdir(), 'crossgrain-restore-'));
chmodSync(scratch, 0o755);
const dump = path.join(scratch, 'crossgrain.dump');
let fresh: { port: number; dataRoot: string };
let world: World;
let auditorId: string;
let runId: string;

async function freePort(): Promise<number> {
  return new Promise((resolve, reject) => {
    const probe = createServer();
    probe.once('error', reject);
    probe.listen(0, '127.0.0.1', () => {
      const address = probe.address();
      const port = typeof address === 'object' && address ? address.port : 0;
      probe.close(() => resolve(port));
    });
  });
}

/** Runs one of the npm scripts' programs the way `npm run` would, with extra arguments. */
function npmScript(script: 'backup' | 'restore', args: string[]) {
  return spawnSync(process.execPath, [path.join(root, 'scripts', `${script}.mjs`), ...args], { cwd: root, env: process.env, encoding: 'utf8' });
}

beforeAll(async () => {
  fresh = { port: await freePort(), dataRoot: path.join(scratch, 'cluster') };
  world = await makeWorld('Restore ward', 500);
  auditorId = (await makeUser()).id;
  await addMember(world.initiativeId, auditorId, 'auditor');
  const actor = { id: world.analyst.id, clientAddress: 'test' };
  const analysis = await withIdentity(world.analyst.id, (t) => createAnalysis(t, actor, {
    initiativeId: world.initiativeId, extractVersionId: world.versionId, title: 'Before the backup',
    question: 'Does the call-back help older patients more?', prespecified: false, spec: CALL_BACK_SPEC,
  }));
  ({ runId } = await withIdentity(world.analyst.id, (t) => startRun(t, actor, analysis.id)));
  expect(await executeRun(runId, world.analyst.id, { threads: 0 })).toBe('succeeded');
});

afterAll(async () => {
  destroyCluster(fresh);
  rmSync(scratch, { recursive: true, force: true });
  await closeOwnerDb();
});

describe('a backup', () => {
  it('restores into a fresh cluster with an intact audit chain and a run that reproduces', async () => {
    const checkpoint = await withIdentity(null, (t) => takeCheckpoint(t));
    expect(checkpoint).not.toBeNull();
    const backup = npmScript('backup', ['--file', dump, '--port', String(testSettings.dbPort), '--data-root', testSettings.dataRoot]);
    expect(backup.status, backup.stderr).toBe(0);
    expect(statSync(dump).size).toBeGreaterThan(10_000);
    expect(existsSync(`${dump}.partial`)).toBe(false);

    const restore = npmScript('restore', ['--file', dump, '--port', String(fresh.port), '--data-root', fresh.dataRoot]);
    expect(restore.status, restore.stderr).toBe(0);
    startCluster(fresh); // the command stops a cluster it started itself

    // The restored copy holds what the original held when the backup was taken.
    const counts = async (table: string) => Number((await ownerDb().query<{ n: string }>(`SELECT count(*) AS n FROM ${table}`, { type: QueryTypes.SELECT }))[0].n);
    const restoredCount = (table: string) => {
      const result = runClusterTool('psql', ['-X', '-A', '-t', '-d', 'crossgrain', '-c', `SELECT count(*) FROM ${table}`], { encoding: 'utf8' }, fresh);
      if (result.status !== 0) throw new Error(String(result.stderr));
      return result.stdout.trim();
    };
    expect(Number(restoredCount(`runs WHERE id = '${runId}'`))).toBe(1);
    expect(Number(restoredCount('audit_events'))).toBeGreaterThanOrEqual(checkpoint!.position);
    expect(Number(restoredCount('audit_events'))).toBeLessThanOrEqual(await counts('audit_events'));

    // Against the restored cluster, as the app role: the chain and a verification re-run.
    const child = spawnSync(process.execPath, [path.join(root, 'node_modules/tsx/dist/cli.mjs'), path.join(root, 'tests/support/restoredChecks.ts'),
      JSON.stringify(checkpoint), auditorId, runId], { cwd: root, env: { ...process.env, CROSSGRAIN_DB_PORT: String(fresh.port) }, encoding: 'utf8', timeout: 60_000 });
    expect(child.status, child.stderr).toBe(0);
    const found = JSON.parse(child.stdout.trim().split('\n').pop() ?? '{}') as {
      chain: { intact: boolean; broken: unknown; checkpoint: { holds: boolean } | null; checked: number };
      status: string; verification: { reproduced: boolean; checks: { name: string; same: boolean }[] } | null;
    };
    expect(found.chain.intact).toBe(true);
    expect(found.chain.broken).toBeNull();
    expect(found.chain.checkpoint?.holds).toBe(true);
    expect(found.status).toBe('succeeded');
    expect(found.verification?.reproduced).toBe(true);
    expect(found.verification?.checks.every((check) => check.same)).toBe(true);
    // The re-run happened in the restored copy only.
    expect(Number(restoredCount(`runs WHERE verifies_run_id = '${runId}'`))).toBe(1);
    expect(await counts(`runs WHERE verifies_run_id = '${runId}'`)).toBe(0);
  });

  it('is refused onto a database that holds data, and a file that is not a backup changes nothing', () => {
    const again = npmScript('restore', ['--file', dump, '--port', String(fresh.port), '--data-root', fresh.dataRoot]);
    expect(again.status).toBe(1);
    expect(again.stderr).toMatch(/already holds \d+ tables; nothing was changed/);

    const other = { port: fresh.port, dataRoot: path.join(scratch, 'empty-cluster') };
    destroyCluster(fresh); // one cluster on the port at a time
    const notABackup = path.join(scratch, 'not-a-backup.dump');
    writeFileSync(notABackup, 'patient_id,age\n1,40\n');
    const refused = npmScript('restore', ['--file', notABackup, '--port', String(other.port), '--data-root', other.dataRoot]);
    destroyCluster(other);
    expect(refused.status).toBe(1);
    expect(refused.stderr).toMatch(/rolled back; nothing was changed/);
    expect(npmScript('restore', ['--file', path.join(scratch, 'missing.dump')]).stderr).toMatch(/No backup file at/);
  });
});
