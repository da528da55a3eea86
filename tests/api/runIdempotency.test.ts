/**
 * One run per click: `POST /api/analyses/{id}/runs` with an Idempotency-Key answers with
 * the same run for the same key, person and analysis for 24 hours; the same key with a
 * different body is refused; after 24 hours the key starts a new run; keys are private.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { QueryTypes } from 'sequelize';
import { generateCallBackCohort } from '@/features/extracts/demoCohorts';
import { hashPassword } from '@/lib/server/passwords';
import { startServer, type ServerHandle } from '../browser/harness';
import { makeReadyExtract } from '../support/extractFactory';
import { addMember, closeOwnerDb, makeInitiative, makeUser, ownerDb } from '../support/factories';
import { ApiClient } from '../support/http';

const password = 'quarry-meadow-thistle';
let server: ServerHandle;
let analysisId: string;
const analyst = new ApiClient();
const colleague = new ApiClient();

const spec = {
  outcome: { column: 'readmitted_30d', type: 'binary' },
  exposure: { column: 'call_back', reference: '0' },
  modifier: { column: 'age_band', type: 'categorical', reference: '18-44' },
  covariates: [],
  model: 'logistic',
  ci: { level: 0.95, method: 'delta' },
};

const runCount = async () =>
  Number((await ownerDb().query<{ n: string }>('SELECT count(*) AS n FROM runs WHERE analysis_id = :id', {
    replacements: { id: analysisId }, type: QueryTypes.SELECT,
  }))[0].n);

const start = (client: ApiClient, key: string | null, body: unknown = {}) =>
  client.request('POST', `/api/analyses/${analysisId}/runs`, body, key === null ? {} : { 'Idempotency-Key': key });

beforeAll(async () => {
  server = await startServer();
  const hash = await hashPassword(password);
  const initiativeId = (await makeInitiative('Idempotency ward')).id;
  const users = [];
  for (const client of [analyst, colleague]) {
    const user = await makeUser({ passwordHash: hash });
    await addMember(initiativeId, user.id, 'analyst');
    expect((await client.signIn(user.email, password)).status).toBe(204);
    users.push(user);
  }
  const { versionId } = await makeReadyExtract(users[0].id, initiativeId, generateCallBackCohort({ rows: 400 }).csv);
  const created = await analyst.request('POST', '/api/analyses', {
    initiativeId, extractVersionId: versionId, title: 'One per click', question: 'Does a double-click queue one run?', prespecified: false, spec,
  });
  expect(created.status).toBe(201);
  analysisId = (await created.json()).id;
});

afterAll(async () => {
  await server?.close();
  await closeOwnerDb();
});

describe('Idempotency-Key on run starts', () => {
  it('answers the same key with the same run, and queues one run, even for requests sent together', async () => {
    const before = await runCount();
    const key = crypto.randomUUID();
    const [first, second] = await Promise.all([start(analyst, key), start(analyst, key)]);
    const third = await start(analyst, key);
    for (const response of [first, second, third]) expect(response.status).toBe(202);
    const ids = await Promise.all([first, second, third].map(async (r) => (await r.json()).runId));
    expect(new Set(ids).size).toBe(1);
    expect(await runCount()).toBe(before + 1);
  });

  it('refuses the same key with a different body, and changes nothing', async () => {
    const key = crypto.randomUUID();
    expect((await start(analyst, key, {})).status).toBe(202);
    const before = await runCount();
    const refused = await start(analyst, key, { note: 'another request' });
    expect(refused.status).toBe(422);
    const error = (await refused.json()).error;
    expect(error.code).toBe('idempotency-key-reused');
    expect(error.message).toMatch(/different request body/);
    expect(await runCount()).toBe(before);
  });

  it('starts a new run for a key older than 24 hours', async () => {
    const key = crypto.randomUUID();
    const firstId = (await (await start(analyst, key)).json()).runId;
    // Set the stored time back past the 24-hour window, as a day passing would.
    await ownerDb().query("UPDATE run_requests SET created_at = now() - interval '24 hours 1 minute' WHERE idempotency_key = :key", {
      replacements: { key },
    });
    const before = await runCount();
    const later = await start(analyst, key);
    expect(later.status).toBe(202);
    const laterId = (await later.json()).runId;
    expect(laterId).not.toBe(firstId);
    expect(await runCount()).toBe(before + 1);
    // …and the key now answers with the new run.
    expect((await (await start(analyst, key)).json()).runId).toBe(laterId);
  });

  it('keeps each person’s keys their own, and queues a run per request without a key', async () => {
    const key = crypto.randomUUID();
    const mine = (await (await start(analyst, key)).json()).runId;
    const theirs = (await (await start(colleague, key)).json()).runId;
    expect(theirs).not.toBe(mine);
    const before = await runCount();
    expect((await start(analyst, null)).status).toBe(202);
    expect((await start(analyst, null)).status).toBe(202);
    expect(await runCount()).toBe(before + 2);
  });

  it('refuses an unusable key with a clear message', async () => {
    const response = await start(analyst, 'x'.repeat(201));
    expect(response.status).toBe(400);
    expect((await response.json()).error.message).toMatch(/Idempotency-Key/);
  });

  it('is documented in the API catalogue', async () => {
    const document = await (await analyst.request('GET', '/api/openapi.json')).json();
    const parameters = document.paths['/api/analyses/{id}/runs'].post.parameters as { name: string; in: string }[];
    expect(parameters).toContainEqual(expect.objectContaining({ name: 'Idempotency-Key', in: 'header' }));
  });
});

describe('comparing runs over HTTP', () => {
  it('compares up to four runs, and refuses a fifth with a clear 400', async () => {
    const ids: string[] = [];
    for (let i = 0; i < 5; i += 1) ids.push((await (await start(analyst, null)).json()).runId);
    const four = await analyst.request('GET', `/api/runs/compare?runs=${ids.slice(0, 4).join(',')}`);
    expect(four.status).toBe(200);
    const comparison = await four.json();
    expect(comparison.runs.map((r: { letter: string }) => r.letter)).toEqual(['A', 'B', 'C', 'D']);
    expect(comparison.caution).toMatch(/not clinical guidance/);
    expect((await analyst.request('GET', `/runs/compare?runs=${ids.slice(0, 4).join(',')}`)).status).toBe(200);
    const five = await analyst.request('GET', `/api/runs/compare?runs=${ids.join(',')}`);
    expect(five.status).toBe(400);
    expect((await five.json()).error.message).toBe('A comparison shows at most 4 runs; 5 were chosen. Choose up to 4.');
    const page = await analyst.request('GET', `/runs/compare?${ids.map((id) => `run=${id}`).join('&')}`);
    expect(page.status).toBe(400);
    expect(await page.text()).toContain('A comparison shows at most 4 runs');
  });
});
