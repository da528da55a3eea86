/**
 * A review decision is an electronic signature (21 CFR 11.50, 11.70, 11.200): the signer
 * enters their password again and states a meaning; the step is bound to the digest of the
 * run's result; an API token cannot sign; a wrong password is refused, counted toward
 * sign-in throttling and records nothing.
 */
import { createHash } from 'node:crypto';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { QueryTypes } from 'sequelize';
import { generateCallBackCohort } from '@/features/extracts/demoCohorts';
import { executeRun } from '@/features/runs/executeRun';
import { hashPassword } from '@/lib/server/passwords';
import { startServer, type ServerHandle } from '../browser/harness';
import { makeReadyExtract } from '../support/extractFactory';
import { addMember, closeOwnerDb, makeInitiative, makeUser, ownerDb } from '../support/factories';
import { ApiClient } from '../support/http';

const password = 'quill-harbour-meadow';
let server: ServerHandle;
let initiativeId: string;
let runId: string;
const ids: Record<string, string> = {};
const emails: Record<string, string> = {};
const clients: Record<string, ApiClient> = {};

/**
 * The digest written independently of the product's code: SHA-256 of JSON with object keys
 * sorted at every level and no spaces (the canonical form the verification re-runs compare).
 */
function independentDigest(value: unknown): string {
  const sorted = JSON.stringify(value, (_key, v: unknown) =>
    v && typeof v === 'object' && !Array.isArray(v) ? Object.fromEntries(Object.entries(v).sort(([a], [b]) => (a < b ? -1 : a > b ? 1 : 0))) : v,
  );
  return createHash('sha256').update(sorted).digest('hex');
}

beforeAll(async () => {
  server = await startServer();
  const hash = await hashPassword(password);
  initiativeId = (await makeInitiative('Signature ward')).id;
  for (const role of ['analyst', 'clinician'] as const) {
    const user = await makeUser({ passwordHash: hash });
    await addMember(initiativeId, user.id, role);
    ids[role] = user.id;
    emails[role] = user.email;
    clients[role] = new ApiClient();
    expect((await clients[role].signIn(user.email, password)).status).toBe(204);
  }
  const { versionId } = await makeReadyExtract(ids.analyst, initiativeId, generateCallBackCohort({ rows: 800 }).csv);
  const created = await clients.analyst.request('POST', '/api/analyses', {
    initiativeId, extractVersionId: versionId, title: 'Call-back signature', question: 'Is the sign-off a signature?', prespecified: true,
    spec: {
      outcome: { column: 'readmitted_30d', type: 'binary' }, exposure: { column: 'call_back', reference: '0' },
      modifier: { column: 'age_band', type: 'categorical', reference: '18-44' }, covariates: [], model: 'logistic', ci: { level: 0.95, method: 'delta' },
    },
  });
  const analysisId = (await created.json()).id;
  runId = (await (await clients.analyst.request('POST', `/api/analyses/${analysisId}/runs`, {})).json()).runId;
  expect(await executeRun(runId, ids.analyst, { threads: 0 })).toBe('succeeded');
  expect((await clients.analyst.request('POST', `/api/runs/${runId}/review/submit`, {})).status).toBe(200);
});

afterAll(async () => {
  await server?.close();
  await closeOwnerDb();
});

const decide = (client: ApiClient, body: object) => client.request('POST', `/api/runs/${runId}/review/decision`, body);
const stepCount = async () =>
  Number((await ownerDb().query<{ n: string }>('SELECT count(*) AS n FROM review_steps WHERE run_id = :runId', { replacements: { runId }, type: QueryTypes.SELECT }))[0].n);
const reviewEvents = async () =>
  ownerDb().query<{ action: string; details: Record<string, unknown> }>(
    "SELECT action, details FROM audit_events WHERE subject_id = :runId AND action LIKE 'review.%' ORDER BY chain_position",
    { replacements: { runId }, type: QueryTypes.SELECT },
  );

describe('signing a decision', () => {
  it('refuses a decision without a meaning or without the password', async () => {
    const noMeaning = await decide(clients.clinician, { decision: 'sign-off', password });
    expect(noMeaning.status).toBe(400);
    expect((await noMeaning.json()).error.details).toEqual([{ path: 'meaning', message: 'Say what your signature means.' }]);
    const blankMeaning = await decide(clients.clinician, { decision: 'sign-off', password, meaning: '   ' });
    expect(blankMeaning.status).toBe(400);
    const noPassword = await decide(clients.clinician, { decision: 'sign-off', meaning: 'reviewed, no objection' });
    expect(noPassword.status).toBe(400);
    expect(await stepCount()).toBe(1);
  });

  it('refuses a wrong password, counts it toward sign-in throttling and records no step', async () => {
    const key = createHash('sha256').update(`crossgrain-signin:${emails.clinician.toLowerCase()}`).digest('hex');
    const failures = async () =>
      Number((await ownerDb().query<{ n: string }>('SELECT count(*) AS n FROM signin_attempts WHERE account_key = :key AND NOT succeeded', { replacements: { key }, type: QueryTypes.SELECT }))[0].n);
    const before = await failures();
    const wrong = await decide(clients.clinician, { decision: 'sign-off', password: 'not-my-password', meaning: 'reviewed, no objection' });
    expect(wrong.status).toBe(403);
    const body = await wrong.json();
    expect(body.error.code).toBe('signature-refused');
    expect(body.error.message).toMatch(/password is not right, so nothing was signed/);
    expect(await failures()).toBe(before + 1);
    expect(await stepCount()).toBe(1);
    expect((await reviewEvents()).map((e) => e.action)).toEqual(['review.submitted', 'review.signature-refused']);
    // The session is untouched: the clinician can still read the run's review.
    expect((await clients.clinician.request('GET', `/api/runs/${runId}/review`)).status).toBe(200);
  });

  it('refuses an API token, even with the right password', async () => {
    const created = await clients.clinician.request('POST', '/api/me/tokens', { name: 'signing script' });
    expect(created.status).toBe(201);
    const script = new ApiClient((await created.json()).token);
    const refused = await decide(script, { decision: 'sign-off', password, meaning: 'reviewed, no objection' });
    expect(refused.status).toBe(403);
    expect((await refused.json()).error.message).toMatch(/API token cannot sign/);
    expect(await stepCount()).toBe(1);
  });

  it('signs off with the password and a meaning, bound to the digest of the stored result', async () => {
    const signed = await decide(clients.clinician, { decision: 'sign-off', password, meaning: '  approved for an internal brief ', note: 'Gradient matches ward experience.' });
    expect(signed.status).toBe(200);
    expect((await signed.json()).state).toBe('signed-off');
    const [stored] = await ownerDb().query<{ result: unknown }>('SELECT result FROM runs WHERE id = :runId', { replacements: { runId }, type: QueryTypes.SELECT });
    const expected = independentDigest(stored.result);
    const review = await (await clients.analyst.request('GET', `/api/runs/${runId}/review`)).json();
    const step = review.steps.at(-1);
    expect(step).toMatchObject({ kind: 'signed-off', actor: { id: ids.clinician }, meaning: 'approved for an internal brief', resultDigest: expected, note: 'Gradient matches ward experience.' });
    expect(step.at).toMatch(/Z$/);
    expect(review.steps[0]).toMatchObject({ kind: 'submitted', meaning: null, resultDigest: null });
    const event = (await reviewEvents()).at(-1)!;
    expect(event.action).toBe('review.signed-off');
    expect(event.details).toMatchObject({ meaning: 'approved for an internal brief', resultDigest: expected });
    // A successful signature does not clear earlier failures: it is not a sign-in.
  });

  it('keeps the database from storing a decision without its signature', async () => {
    await expect(
      ownerDb().query("INSERT INTO review_steps (run_id, initiative_id, kind, actor_id, note) VALUES (:runId, :initiativeId, 'sent-back', :actor, 'why')", {
        replacements: { runId, initiativeId, actor: ids.clinician },
      }),
    ).rejects.toMatchObject({ parent: { code: '23514' } });
  });
});
