/**
 * Ingest is one transaction: a process killed part-way through storing, or an upload
 * cancelled before it is stored, leaves no extract, no version and no column behind.
 */
import { spawn } from 'node:child_process';
import { randomUUID } from 'node:crypto';
import path from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { QueryTypes } from 'sequelize';
import { readExtractColumns, reviewExtractColumns } from '@/features/extracts/extracts';
import { getExtract, storeVersion } from '@/features/extracts/extracts.server';
import { cancelIntake } from '@/features/extracts/intake.server';
import { sequelize, withIdentity } from '@/lib/server/db';
import { addMember, closeOwnerDb, makeInitiative, makeUser, ownerDb } from '../support/factories';

afterAll(async () => {
  await closeOwnerDb();
});

async function rowsFor(extractId: string, versionId: string) {
  const [row] = await ownerDb().query<{ extracts: string; versions: string; columns: string }>(
    `SELECT (SELECT count(*) FROM extracts WHERE id = :extractId) AS extracts,
            (SELECT count(*) FROM extract_versions WHERE id = :versionId) AS versions,
            (SELECT count(*) FROM extract_columns WHERE version_id = :versionId) AS columns`,
    { replacements: { extractId, versionId }, type: QueryTypes.SELECT },
  );
  return { extracts: Number(row.extracts), versions: Number(row.versions), columns: Number(row.columns) };
}

async function analystIn() {
  const user = await makeUser();
  const initiative = await makeInitiative();
  await addMember(initiative.id, user.id, 'analyst');
  return { userId: user.id, initiativeId: initiative.id };
}

describe('a process killed mid-ingest', () => {
  it('leaves no extract, version or column, and the upload reads as failed once stale', async () => {
    const { userId, initiativeId } = await analystIn();
    const extractId = randomUUID();
    const versionId = randomUUID();
    const child = spawn('npx', ['tsx', path.resolve(import.meta.dirname, '../support/ingestChild.ts'), userId, initiativeId, extractId, versionId], {
      env: process.env,
      stdio: ['ignore', 'pipe', 'inherit'],
      detached: true,
    });
    await new Promise<void>((resolve, reject) => {
      child.stdout.on('data', (chunk: Buffer) => {
        if (chunk.toString().includes('paused')) resolve();
      });
      child.on('exit', (code) => reject(new Error(`the ingest process ended early (${code})`)));
    });
    // The first column is written inside the open transaction; kill the whole process group.
    process.kill(-child.pid!, 'SIGKILL');
    await new Promise((resolve) => child.once('exit', resolve));
    // PostgreSQL notices the dropped connection and rolls the transaction back.
    let counts = await rowsFor(extractId, versionId);
    for (let i = 0; i < 50 && counts.columns + counts.versions + counts.extracts > 0; i += 1) {
      await new Promise((resolve) => setTimeout(resolve, 100));
      counts = await rowsFor(extractId, versionId);
    }
    expect(counts).toEqual({ extracts: 0, versions: 0, columns: 0 });
    // The intake record remains, still "processing"; once its heartbeat is old it reads as failed.
    await ownerDb().query("UPDATE extract_intakes SET heartbeat_at = now() - interval '10 minutes' WHERE id = :id", { replacements: { id: versionId } });
    const view = await withIdentity(userId, (t) => getExtract(t, extractId));
    expect(view?.versions[0]).toMatchObject({ versionId, status: 'failed' });
  });
});

describe('a cancelled upload', () => {
  it('is never stored', async () => {
    const { userId, initiativeId } = await analystIn();
    const extractId = randomUUID();
    const versionId = randomUUID();
    await withIdentity(userId, (t) =>
      sequelize.query(
        `INSERT INTO extract_intakes (id, extract_id, initiative_id, name, new_extract, uploaded_by, status, stage)
         VALUES (:versionId, :extractId, :initiativeId, 'Cancelled', true, :userId, 'processing', 'screening')`,
        { replacements: { versionId, extractId, initiativeId, userId }, transaction: t },
      ),
    );
    const read = await readExtractColumns([Buffer.from('a,b\n1,2\n3,4\n')]);
    const review = reviewExtractColumns(read.columns);
    expect(await withIdentity(userId, (t) => cancelIntake(t, { id: userId, clientAddress: 'test' }, extractId, versionId))).toBe(true);
    const stored = await withIdentity(userId, (t) =>
      storeVersion(sequelize, t, { id: userId, clientAddress: 'test' }, { initiativeId, extractId, versionId, name: 'Cancelled', newExtract: true }, read, review.profile, review.findings),
    );
    expect(stored).toBe(false);
    expect(await rowsFor(extractId, versionId)).toEqual({ extracts: 0, versions: 0, columns: 0 });
    const view = await withIdentity(userId, (t) => getExtract(t, extractId));
    expect(view?.versions[0]).toMatchObject({ status: 'failed', reasons: [{ code: 'cancelled' }] });
  });
});
