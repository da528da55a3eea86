/**
 * Partial upload files (issue 13): a refused upload leaves no `.part` file behind, not even
 * an empty one created by an open that finished after the refusal, and the partial files
 * of an earlier process (one that crashed mid-upload) are swept before the first upload.
 */
import { existsSync, mkdirSync, readdirSync, utimesSync, writeFileSync } from 'node:fs';
import path from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { QueryTypes } from 'sequelize';
import { cancelIntake, receiveUpload, sweepPartialUploads } from '@/features/extracts/intake.server';
import { withIdentity } from '@/lib/server/db';
import { env } from '@/lib/server/env';
import { addMember, closeOwnerDb, makeInitiative, makeUser, ownerDb } from '../support/factories';

const uploads = path.resolve(env.CROSSGRAIN_DATA_DIR, 'uploads');

afterAll(async () => {
  await closeOwnerDb();
});

function uploadRequest(body: Uint8Array<ArrayBuffer>, type = 'text/csv'): Request {
  return new Request('http://127.0.0.1/upload', { method: 'POST', headers: { 'Content-Type': type }, body });
}

describe('a refused upload', () => {
  it.each([
    ['a body of the wrong media type (refused before a byte is read)', 'application/octet-stream', 415],
    ['a binary first chunk', 'text/csv', 422],
  ])('leaves no partial file for %s', async (_what, type, status) => {
    const user = await makeUser();
    const initiative = await makeInitiative();
    await addMember(initiative.id, user.id, 'analyst');
    const binary = new Uint8Array([0x50, 0x4b, 0x03, 0x04, 0x00, 0x00, 0x01, 0x02]);
    for (let attempt = 0; attempt < 5; attempt += 1) {
      const before = new Set(existsSync(uploads) ? readdirSync(uploads) : []);
      await expect(
        receiveUpload({ id: user.id, clientAddress: 'test' }, { initiativeId: initiative.id, name: `Refused ${attempt}` }, uploadRequest(binary, type)),
      ).rejects.toMatchObject({ status });
      // Give a late open the time to create its file, as it did before.
      await new Promise((resolve) => setTimeout(resolve, 100));
      const left = readdirSync(uploads).filter((name) => !before.has(name) && name.endsWith('.part'));
      expect(left).toEqual([]);
    }
  });
});

describe('an upload that ends', () => {
  it.each([
    ['is cancelled while it arrives', true],
    ['is stored', false],
  ])('leaves no partial file when it %s, and keeps its raw file only in the database when stored', async (_what, cancel) => {
    const user = await makeUser();
    const initiative = await makeInitiative();
    await addMember(initiative.id, user.id, 'analyst');
    const name = `Ends ${cancel ? 'cancelled' : 'stored'}`;
    let release: () => void = () => undefined;
    const released = new Promise<void>((resolve) => { release = resolve; });
    const encoder = new TextEncoder();
    // The body's second half arrives only once the test lets it (after the cancel, when cancelling).
    const body = new ReadableStream<Uint8Array>({
      async start(controller) {
        controller.enqueue(encoder.encode('treated,outcome\n'));
        await released;
        for (let i = 0; i < 50; i += 1) controller.enqueue(encoder.encode(`${i % 2},${i % 3 === 0 ? 1 : 0}\n`));
        controller.close();
      },
    });
    const request = new Request('http://127.0.0.1/upload', { method: 'POST', headers: { 'Content-Type': 'text/csv' }, body, duplex: 'half' } as RequestInit);
    const receiving = receiveUpload({ id: user.id, clientAddress: 'test' }, { initiativeId: initiative.id, name }, request);
    let intake: { id: string; extract_id: string } | undefined;
    for (let i = 0; i < 100 && !intake; i += 1) {
      await new Promise((resolve) => setTimeout(resolve, 50));
      [intake] = await ownerDb().query<{ id: string; extract_id: string }>('SELECT id, extract_id FROM extract_intakes WHERE name = :name', {
        replacements: { name }, type: QueryTypes.SELECT,
      });
    }
    if (!intake) throw new Error('the intake record did not appear');
    const partFile = path.join(uploads, `${intake.id}.part`);
    // The partial file exists while the body is still arriving.
    for (let i = 0; i < 40 && !existsSync(partFile); i += 1) await new Promise((resolve) => setTimeout(resolve, 50));
    expect(existsSync(partFile)).toBe(true);
    if (cancel) {
      expect(await withIdentity(user.id, (t) => cancelIntake(t, { id: user.id, clientAddress: 'test' }, intake.extract_id, intake.id))).toBe(true);
    }
    release();
    const { done } = await receiving;
    await done;
    expect(existsSync(partFile)).toBe(false);
    const [counts] = await ownerDb().query<{ versions: number; files: number }>(
      `SELECT (SELECT count(*)::int FROM extract_versions WHERE id = :id) AS versions,
              (SELECT count(*)::int FROM extract_files WHERE version_id = :id) AS files`,
      { replacements: { id: intake.id }, type: QueryTypes.SELECT },
    );
    expect(counts).toEqual(cancel ? { versions: 0, files: 0 } : { versions: 1, files: 1 });
  });
});

describe('the sweep of partial files', () => {
  it('removes the .part files older than this process and keeps a current one', async () => {
    const directory = path.resolve(env.CROSSGRAIN_DATA_DIR, 'sweep-test');
    mkdirSync(directory, { recursive: true });
    const stale = path.join(directory, 'left-by-a-crash.part');
    const current = path.join(directory, 'being-received.part');
    const stored = path.join(directory, 'not-partial.csv');
    for (const file of [stale, current, stored]) writeFileSync(file, 'a,b\n1,2\n');
    const startedAt = Date.now() - 60_000;
    const longAgo = new Date(startedAt - 3_600_000);
    utimesSync(stale, longAgo, longAgo);
    utimesSync(stored, longAgo, longAgo);
    expect(await sweepPartialUploads(directory, startedAt)).toEqual(['left-by-a-crash.part']);
    expect(existsSync(stale)).toBe(false);
    expect(existsSync(current)).toBe(true);
    expect(existsSync(stored)).toBe(true);
  });
});
