/**
 * Raw upload files in PostgreSQL (issue 13): the migration copies the files that earlier
 * versions kept on the receiving server's disk into extract_files (once), and row-level
 * security lets the initiative's members read the chunks, nobody else, and nobody change them.
 */
import { mkdtempSync, mkdirSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { QueryTypes } from 'sequelize';
import { sequelize, withIdentity } from '@/lib/server/db';
import { copyRawFiles } from '../../db/migrations/2026.12.02T07.00.00.store-raw-files-in-database';
import { makeReadyExtract } from '../support/extractFactory';
import { addMember, closeOwnerDb, makeInitiative, makeUser, ownerDb } from '../support/factories';

const dataDir = mkdtempSync(path.join(tmpdir(), 'crossgrain-raw-files-'));

afterAll(async () => {
  rmSync(dataDir, { recursive: true, force: true });
  await closeOwnerDb();
});

const csv = ['treated,outcome', ...Array.from({ length: 40 }, (_, i) => `${i % 2},${i % 3 === 0 ? 1 : 0}`)].join('\n');

describe('raw upload files', () => {
  it('are copied from the old folder by the migration, once, chunk by chunk', async () => {
    const analyst = await makeUser();
    const initiative = await makeInitiative('Raw files moved');
    await addMember(initiative.id, analyst.id, 'analyst');
    const { versionId } = await makeReadyExtract(analyst.id, initiative.id, csv);
    // What an earlier version kept on disk: here 2.5 MiB, so three chunks of at most 1 MiB.
    const bytes = Buffer.alloc(2.5 * 1024 * 1024, 'treated,outcome\n1,0\n');
    mkdirSync(path.join(dataDir, 'extracts', initiative.id), { recursive: true });
    writeFileSync(path.join(dataDir, 'extracts', initiative.id, `${versionId}.csv`), bytes);

    expect(await copyRawFiles(ownerDb(), dataDir)).toBe(1);
    const chunks = await ownerDb().query<{ chunk: number; bytes: Buffer }>(
      'SELECT chunk, bytes FROM extract_files WHERE version_id = :versionId ORDER BY chunk', { replacements: { versionId }, type: QueryTypes.SELECT },
    );
    expect(chunks.map((c) => [c.chunk, c.bytes.length])).toEqual([[0, 1048576], [1, 1048576], [2, 524288]]);
    expect(Buffer.concat(chunks.map((c) => c.bytes)).equals(bytes)).toBe(true);
    // Run again (a migration re-applied by hand): nothing is copied twice.
    expect(await copyRawFiles(ownerDb(), dataDir)).toBe(0);
  });

  it('are readable by the initiative’s members only, and never changed', async () => {
    const analyst = await makeUser();
    const outsider = await makeUser();
    const initiative = await makeInitiative('Raw files guarded');
    await addMember(initiative.id, analyst.id, 'analyst');
    await addMember((await makeInitiative('Raw files elsewhere')).id, outsider.id, 'analyst');
    const { versionId } = await makeReadyExtract(analyst.id, initiative.id, csv);
    await ownerDb().query("INSERT INTO extract_files (version_id, initiative_id, chunk, bytes) VALUES (:versionId, :initiativeId, 0, 'x')", {
      replacements: { versionId, initiativeId: initiative.id },
    });
    const count = (userId: string) => withIdentity(userId, (t) =>
      sequelize.query<{ n: number }>('SELECT count(*)::int AS n FROM extract_files WHERE version_id = :versionId', {
        replacements: { versionId }, type: QueryTypes.SELECT, transaction: t,
      })).then((rows) => rows[0].n);
    expect(await count(analyst.id)).toBe(1);
    expect(await count(outsider.id)).toBe(0);
    // The outsider cannot add a chunk to another initiative's version; the analyst cannot change or delete one.
    await expect(withIdentity(outsider.id, (t) => sequelize.query(
      "INSERT INTO extract_files (version_id, initiative_id, chunk, bytes) VALUES (:versionId, :initiativeId, 1, 'y')",
      { replacements: { versionId, initiativeId: initiative.id }, transaction: t },
    ))).rejects.toMatchObject({ parent: { code: '42501' } });
    for (const statement of ["UPDATE extract_files SET bytes = 'z' WHERE version_id = :versionId", 'DELETE FROM extract_files WHERE version_id = :versionId']) {
      await expect(withIdentity(analyst.id, (t) => sequelize.query(statement, { replacements: { versionId }, transaction: t })))
        .rejects.toMatchObject({ parent: { code: '42501' } });
    }
  });
});
