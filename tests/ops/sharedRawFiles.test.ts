/**
 * Any app server serves any request (issue 13): an extract uploaded through one app server
 * is shown, previewed and downloaded byte for byte by a second app server process with a
 * data folder of its own, because the raw file is kept in PostgreSQL, never on the
 * receiving server's disk; the receiving server keeps neither the file nor its partial copy.
 */
import { spawn, type ChildProcess } from 'node:child_process';
import { createHash } from 'node:crypto';
import { existsSync, mkdtempSync, readdirSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { QueryTypes } from 'sequelize';
import { env } from '@/lib/server/env';
import { hashPassword } from '@/lib/server/passwords';
import { SESSION_COOKIE } from '@/lib/server/session';
import { appUrl, startServer, type ServerHandle } from '../browser/harness';
import { addMember, closeOwnerDb, makeInitiative, makeUser, ownerDb } from '../support/factories';
import { ApiClient } from '../support/http';
import { streamUpload } from '../support/upload';

const root = path.resolve(import.meta.dirname, '../..');
const password = 'gannet-saltmarsh-ledger';
const secondPort = Number(new URL(appUrl).port) + 100;
const secondUrl = `http://127.0.0.1:${secondPort}`;
const secondDataDir = mkdtempSync(path.join(tmpdir(), 'crossgrain-second-server-'));

let first: ServerHandle;
let second: ChildProcess;
let analyst: ApiClient;
let clinician: ApiClient;
let initiativeId: string;

async function waitForSecond(): Promise<void> {
  for (let i = 0; i < 200; i += 1) {
    try {
      if ((await fetch(`${secondUrl}/api/health`)).ok) return;
    } catch { /* not up yet */ }
    await new Promise((resolve) => setTimeout(resolve, 100));
  }
  throw new Error('the second app server did not start');
}

beforeAll(async () => {
  first = await startServer();
  second = spawn(process.execPath, [path.join(root, 'scripts/serve.mjs')], {
    cwd: root,
    env: { ...process.env, HOST: '127.0.0.1', PORT: String(secondPort), LOG_LEVEL: 'warn', CROSSGRAIN_DATA_DIR: secondDataDir, CROSSGRAIN_APP_PROCESSES: '1' },
    stdio: 'ignore',
  });
  await waitForSecond();
  const user = await makeUser({ passwordHash: await hashPassword(password) });
  initiativeId = (await makeInitiative('Two app servers')).id;
  await addMember(initiativeId, user.id, 'analyst');
  analyst = new ApiClient();
  expect((await analyst.signIn(user.email, password)).status).toBe(204);
  const reader = await makeUser({ passwordHash: await hashPassword(password) });
  await addMember(initiativeId, reader.id, 'clinician');
  clinician = new ApiClient();
  expect((await clinician.signIn(reader.email, password)).status).toBe(204);
});

afterAll(async () => {
  if (second && second.exitCode === null) {
    const exited = new Promise((resolve) => second.once('exit', resolve));
    second.kill('SIGTERM');
    await exited;
  }
  rmSync(secondDataDir, { recursive: true, force: true });
  await first?.close();
  await closeOwnerDb();
});

/** A GET on the second server with the session the first one issued. */
function onSecond(pathname: string): Promise<Response> {
  return fetch(`${secondUrl}${pathname}`, { headers: { Cookie: `${SESSION_COOKIE}=${analyst.cookie(SESSION_COOKIE)}` } });
}

/** Invented rows (about 21 bytes each), so that 100,000 of them span several 1 MiB chunks. */
function invented(rows: number): Buffer {
  const lines = ['call_back,readmitted_30d,age_band,length_of_stay'];
  for (let i = 0; i < rows; i += 1) lines.push(`${i % 2},${i % 7 === 0 ? 1 : 0},${['18-44', '45-64', '65-79', '80-89'][i % 4]},${(1 + (i % 23) * 0.5).toFixed(1)}`);
  return Buffer.from(`${lines.join('\n')}\n`);
}

describe('two app servers on one database', () => {
  it('serve an extract uploaded through either, raw file included', async () => {
    const csv = invented(100_000);
    const sha256 = createHash('sha256').update(csv).digest('hex');
    const answer = await streamUpload(`/api/initiatives/${initiativeId}/extracts?name=Shared`, [csv.subarray(0, 1_000_000), csv.subarray(1_000_000)], {
      Cookie: `${SESSION_COOKIE}=${analyst.cookie(SESSION_COOKIE)}`,
    });
    expect(answer.status).toBe(202);
    const { extractId, versionId } = JSON.parse(answer.body) as { extractId: string; versionId: string };
    let status = 'processing';
    for (let i = 0; i < 300 && status === 'processing'; i += 1) {
      await new Promise((resolve) => setTimeout(resolve, 100));
      // Progress is read from the second server while the first stores.
      const response = await onSecond(`/api/extracts/${extractId}`);
      if (response.status === 200) status = ((await response.json()) as { versions: { status: string }[] }).versions[0].status;
    }
    expect(status).toBe('needs-review');

    const extract = (await (await onSecond(`/api/extracts/${extractId}`)).json()) as { versions: { versionId: string; sha256: string; rows: number }[] };
    expect(extract.versions[0]).toMatchObject({ versionId, sha256, rows: 100_000 });
    const rows = await onSecond(`/api/extracts/${extractId}/versions/${versionId}/rows?page=1&pageSize=3`);
    expect(rows.status).toBe(200);
    // The first three data rows of invented(): i = 0, 1, 2.
    expect(((await rows.json()) as { rows: unknown[] }).rows).toEqual([[0, 1, '18-44', 1], [1, 0, '45-64', 1.5], [0, 0, '65-79', 2]]);

    const download = await onSecond(`/api/extracts/${extractId}/versions/${versionId}/file`);
    expect(download.status).toBe(200);
    expect(download.headers.get('content-disposition')).toMatch(/^attachment;/);
    const bytes = Buffer.from(await download.arrayBuffer());
    expect(bytes.length).toBe(csv.length);
    expect(createHash('sha256').update(bytes).digest('hex')).toBe(sha256);

    // In the database, in chunks of 1 MiB; on the receiving server's disk, nothing.
    const [stored] = await ownerDb().query<{ chunks: number }>('SELECT count(*)::int AS chunks FROM extract_files WHERE version_id = :versionId', {
      replacements: { versionId }, type: QueryTypes.SELECT,
    });
    expect(csv.length).toBeGreaterThan(1024 * 1024);
    expect(stored.chunks).toBe(Math.ceil(csv.length / (1024 * 1024)));
    expect(existsSync(path.resolve(env.CROSSGRAIN_DATA_DIR, 'extracts', initiativeId))).toBe(false);
    const uploads = path.resolve(env.CROSSGRAIN_DATA_DIR, 'uploads');
    expect((existsSync(uploads) ? readdirSync(uploads) : []).filter((name) => name.startsWith(versionId))).toEqual([]);

    // The download is audited, and refused to a member who may not see rows.
    const [event] = await ownerDb().query<{ details: { sha256: string } }>(
      "SELECT details FROM audit_events WHERE action = 'extract.file-downloaded' AND subject_id = :extractId", { replacements: { extractId }, type: QueryTypes.SELECT },
    );
    expect(event.details.sha256).toBe(sha256);
    // A clinician of an initiative that keeps rows from readers (the default) may not download it.
    expect((await clinician.request('GET', `/api/extracts/${extractId}/versions/${versionId}/file`)).status).toBe(403);
  });
});
