/**
 * The review of runs over HTTP (product brief, review step): analysts submit, clinicians
 * comment and sign off or send back with a note, auditors only read, another initiative's
 * members see nothing; the state machine refuses steps out of turn; comments thread one
 * level deep; the board places each analysis by its review; every step is audited; and
 * row-level security refuses a step recorded by the wrong role even below the API.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { QueryTypes } from 'sequelize';
import { generateCallBackCohort } from '@/features/extracts/demoCohorts';
import { executeRun } from '@/features/runs/executeRun';
import { sequelize, withIdentity } from '@/lib/server/db';
import { hashPassword } from '@/lib/server/passwords';
import { startServer, type ServerHandle } from '../browser/harness';
import { makeReadyExtract } from '../support/extractFactory';
import { addMember, closeOwnerDb, makeInitiative, makeUser, ownerDb } from '../support/factories';
import { ApiClient } from '../support/http';

const password = 'heron-sluice-lantern';
let server: ServerHandle;
let initiativeId: string;
let analysisId: string;
let runId: string;
const ids: Record<string, string> = {};
const clients: Record<'analyst' | 'clinician' | 'auditor' | 'outsider', ApiClient> = {} as never;

beforeAll(async () => {
  server = await startServer();
  const hash = await hashPassword(password);
  initiativeId = (await makeInitiative('Review ward')).id;
  const other = (await makeInitiative('Other review ward')).id;
  for (const [role, where] of [['analyst', initiativeId], ['clinician', initiativeId], ['auditor', initiativeId], ['outsider', other]] as const) {
    const user = await makeUser({ passwordHash: hash });
    await addMember(where, user.id, role === 'outsider' ? 'clinician' : role);
    ids[role] = user.id;
    const client = new ApiClient();
    expect((await client.signIn(user.email, password)).status).toBe(204);
    clients[role] = client;
  }
  const { versionId } = await makeReadyExtract(ids.analyst, initiativeId, generateCallBackCohort({ rows: 1200 }).csv);
  const created = await clients.analyst.request('POST', '/api/analyses', {
    initiativeId, extractVersionId: versionId, title: 'Call-back by age band', question: 'Does the call-back help older patients more?', prespecified: true,
    spec: {
      outcome: { column: 'readmitted_30d', type: 'binary' }, exposure: { column: 'call_back', reference: '0' },
      modifier: { column: 'age_band', type: 'categorical', reference: '18-44' }, covariates: [], model: 'logistic', ci: { level: 0.95, method: 'delta' },
    },
  });
  analysisId = (await created.json()).id;
  runId = (await (await clients.analyst.request('POST', `/api/analyses/${analysisId}/runs`, {})).json()).runId;
  expect(await executeRun(runId, ids.analyst, { threads: 0 })).toBe('succeeded');
});

afterAll(async () => {
  await server?.close();
  await closeOwnerDb();
});

const review = async () => (await clients.auditor.request('GET', `/api/runs/${runId}/review`)).json();
/** A decision, signed with the signer's password and a meaning of ours unless the body says otherwise. */
const decide = (client: ApiClient, body: { decision: string; note?: string }) =>
  client.request('POST', `/api/runs/${runId}/review/decision`, {
    password, meaning: body.decision === 'sign-off' ? 'reviewed, no objection' : 'returned for changes', ...body,
  });

describe('the review of a run', () => {
  it('starts as a draft that only an analyst may submit', async () => {
    expect((await review()).state).toBe('draft');
    expect((await decide(clients.clinician, { decision: 'sign-off' })).status).toBe(409);
    for (const role of ['clinician', 'auditor'] as const) {
      expect((await clients[role].request('POST', `/api/runs/${runId}/review/submit`, {})).status, role).toBe(403);
    }
    expect((await clients.outsider.request('POST', `/api/runs/${runId}/review/submit`, {})).status).toBe(404);
    const submitted = await clients.analyst.request('POST', `/api/runs/${runId}/review/submit`, { note: 'Adjusted for nothing yet: first look.' });
    expect(submitted.status).toBe(200);
    expect((await submitted.json()).state).toBe('submitted');
    // The clinician's home page shows the queue; the analyst's does not.
    expect(await (await clients.clinician.request('GET', '/')).text()).toContain('1 run waiting for your review');
    expect(await (await clients.analyst.request('GET', '/')).text()).not.toContain('waiting for your review');
    expect((await clients.analyst.request('POST', `/api/runs/${runId}/review/submit`, {})).status).toBe(409);
  });

  it('is sent back only with a note, resubmitted, then signed off, and then closed', async () => {
    const bare = await decide(clients.clinician, { decision: 'send-back', note: '  ' });
    expect(bare.status).toBe(400);
    expect((await bare.json()).error.details).toEqual([{ path: 'note', message: 'Say what needs to change before the run can be signed off.' }]);
    expect((await decide(clients.auditor, { decision: 'sign-off' })).status).toBe(403);
    expect((await decide(clients.analyst, { decision: 'sign-off' })).status).toBe(403);
    const back = await decide(clients.clinician, { decision: 'send-back', note: 'Please adjust for comorbidity before we brief this.' });
    expect((await back.json()).state).toBe('sent-back');
    expect((await clients.analyst.request('POST', `/api/runs/${runId}/review/submit`, {})).status).toBe(200);
    const signed = await decide(clients.clinician, { decision: 'sign-off', note: 'Plausible: the gradient by age matches ward experience.' });
    expect((await signed.json()).state).toBe('signed-off');
    expect(await (await clients.clinician.request('GET', '/')).text()).not.toContain('waiting for your review');
    expect((await clients.analyst.request('POST', `/api/runs/${runId}/review/submit`, {})).status).toBe(409);
    expect((await decide(clients.clinician, { decision: 'send-back', note: 'again' })).status).toBe(409);

    const { steps } = await review();
    expect(steps.map((s: { kind: string; actor: { id: string } }) => [s.kind, s.actor.id])).toEqual([
      ['submitted', ids.analyst], ['sent-back', ids.clinician], ['submitted', ids.analyst], ['signed-off', ids.clinician],
    ]);
    const events = await ownerDb().query<{ action: string; actor_role: string }>(
      "SELECT action, actor_role FROM audit_events WHERE subject_id = :id AND action LIKE 'review.%' ORDER BY chain_position",
      { replacements: { id: runId }, type: QueryTypes.SELECT },
    );
    expect(events.map((e) => `${e.action}:${e.actor_role}`)).toEqual([
      'review.submitted:analyst', 'review.sent-back:clinician', 'review.submitted:analyst', 'review.signed-off:clinician',
    ]);
  });

  it('shows the state with the run, in its history and on its page', async () => {
    expect((await (await clients.clinician.request('GET', `/api/runs/${runId}?fields=status`)).json()).reviewState).toBe('signed-off');
    expect(await (await clients.auditor.request('GET', `/analyses/${analysisId}`)).text()).toContain('Signed off');
    expect(await (await clients.auditor.request('GET', `/runs/${runId}`)).text()).toMatch(/data-testid="review-state-top"[^>]*>Signed off</);
  });

  it('places the analysis on the board by its review', async () => {
    const board = await (await clients.clinician.request('GET', `/api/initiatives/${initiativeId}/board`)).json();
    const column = (state: string) => board.columns.find((c: { state: string }) => c.state === state).analyses.map((a: { analysisId: string }) => a.analysisId);
    expect(column('signed-off')).toEqual([analysisId]);
    expect(column('draft')).toEqual([]);
    expect((await clients.outsider.request('GET', `/api/initiatives/${initiativeId}/board`)).status).toBe(404);
    const page = await clients.clinician.request('GET', `/initiatives/${initiativeId}/board`);
    expect(page.status).toBe(200);
    const html = await page.text();
    expect(html).toContain('Call-back by age band');
    expect(html).not.toContain('No analyses yet.');
    // An initiative without analyses says so instead of showing four empty columns' worth of nothing.
    const me = await (await clients.outsider.request('GET', '/api/me')).json();
    const empty = await clients.outsider.request('GET', `/initiatives/${me.memberships[0].initiativeId}/board`);
    expect(await empty.text()).toContain('No analyses yet.');
  });
});

describe('comments on a run', () => {
  it('thread one level deep, from analysts and clinicians; auditors and outsiders may not post', async () => {
    const first = await clients.analyst.request('POST', `/api/runs/${runId}/comments`, { body: 'Is the 80+ stratum large enough?' });
    expect(first.status).toBe(201);
    const firstId = (await first.json()).id;
    const answer = await clients.clinician.request('POST', `/api/runs/${runId}/comments`, { body: 'Yes: 1,900 patients.', parentId: firstId });
    const answerId = (await answer.json()).id;
    // A reply to a reply joins the same thread.
    await clients.analyst.request('POST', `/api/runs/${runId}/comments`, { body: 'Thank you.', parentId: answerId });
    expect((await clients.auditor.request('POST', `/api/runs/${runId}/comments`, { body: 'Noted.' })).status).toBe(403);
    expect((await clients.outsider.request('POST', `/api/runs/${runId}/comments`, { body: 'Hello?' })).status).toBe(404);
    expect((await clients.analyst.request('POST', `/api/runs/${runId}/comments`, { body: '   ' })).status).toBe(400);
    expect((await clients.analyst.request('POST', `/api/runs/${runId}/comments`, { body: 'x', parentId: '00000000-0000-4000-8000-000000000000' })).status).toBe(404);
    const { comments } = await review();
    expect(comments.map((c: { body: string; parentId: string | null }) => [c.body, c.parentId])).toEqual([
      ['Is the 80+ stratum large enough?', null], ['Yes: 1,900 patients.', firstId], ['Thank you.', firstId],
    ]);
  });
});

describe('row-level security below the API', () => {
  it('refuses a step recorded by the wrong role, or a decision on one’s own run', async () => {
    const insert = (actor: string, kind: string) =>
      withIdentity(actor, (t) =>
        sequelize.query('INSERT INTO review_steps (run_id, initiative_id, kind, actor_id, note) VALUES (:run, :initiative, :kind, :actor, :note)', {
          replacements: { run: runId, initiative: initiativeId, kind, actor, note: 'n' }, transaction: t,
        }),
      );
    await expect(insert(ids.clinician, 'submitted')).rejects.toMatchObject({ parent: { code: '42501' } });
    await expect(insert(ids.analyst, 'signed-off')).rejects.toMatchObject({ parent: { code: '42501' } });
    await expect(insert(ids.auditor, 'submitted')).rejects.toMatchObject({ parent: { code: '42501' } });
    // A clinician who also started the run (possible only below the API) may not decide on it.
    await ownerDb().query('UPDATE runs SET started_by = :clinician WHERE id = :id', { replacements: { clinician: ids.clinician, id: runId } });
    try {
      await expect(insert(ids.clinician, 'signed-off')).rejects.toMatchObject({ parent: { code: '42501' } });
    } finally {
      await ownerDb().query('UPDATE runs SET started_by = :analyst WHERE id = :id', { replacements: { analyst: ids.analyst, id: runId } });
    }
  });
});
