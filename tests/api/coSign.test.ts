/**
 * An initiative may require sign-offs from several distinct clinicians (issue 12 §2). Each
 * sign-off short of the number is a signature of its own that leaves the run submitted; a
 * clinician signs once per submission; the last one required signs the run off; a send-back
 * by any clinician ends the round. With the default of one, a single sign-off suffices.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { QueryTypes } from 'sequelize';
import { generateCallBackCohort } from '@/features/extracts/demoCohorts';
import { executeRun } from '@/features/runs/executeRun';
import { hashPassword } from '@/lib/server/passwords';
import { startServer, type ServerHandle } from '../browser/harness';
import { makeReadyExtract } from '../support/extractFactory';
import { addMember, closeOwnerDb, makeInitiative, makeUser, ownerDb } from '../support/factories';
import { ApiClient } from '../support/http';

const password = 'lantern-orchard-quay';
const ROLES = ['analyst', 'first', 'second', 'third'] as const;
let server: ServerHandle;
let initiativeId: string;
let analysisId: string;
let admin: ApiClient;
const clients = {} as Record<(typeof ROLES)[number], ApiClient>;
const ids = {} as Record<(typeof ROLES)[number], string>;
const names = {} as Record<(typeof ROLES)[number], string>;
let signedRunId: string;

beforeAll(async () => {
  server = await startServer();
  const hash = await hashPassword(password);
  initiativeId = (await makeInitiative('Co-signing ward')).id;
  for (const role of ROLES) {
    const user = await makeUser({ passwordHash: hash });
    await addMember(initiativeId, user.id, role === 'analyst' ? 'analyst' : 'clinician');
    ids[role] = user.id;
    names[role] = (await ownerDb().query<{ name: string }>('SELECT display_name AS name FROM users WHERE id = :id', { replacements: { id: user.id }, type: QueryTypes.SELECT }))[0].name;
    clients[role] = new ApiClient();
    expect((await clients[role].signIn(user.email, password)).status).toBe(204);
  }
  const administrator = await makeUser({ passwordHash: hash, isAdmin: true });
  admin = new ApiClient();
  expect((await admin.signIn(administrator.email, password)).status).toBe(204);
  const { versionId } = await makeReadyExtract(ids.analyst, initiativeId, generateCallBackCohort({ rows: 800 }).csv);
  const created = await clients.analyst.request('POST', '/api/analyses', {
    initiativeId, extractVersionId: versionId, title: 'Call-back co-signing', question: 'Do two clinicians agree?', prespecified: true,
    spec: {
      outcome: { column: 'readmitted_30d', type: 'binary' }, exposure: { column: 'call_back', reference: '0' },
      modifier: { column: 'age_band', type: 'categorical', reference: '18-44' }, covariates: [], model: 'logistic', ci: { level: 0.95, method: 'delta' },
    },
  });
  analysisId = (await created.json()).id;
});

afterAll(async () => {
  await server?.close();
  await closeOwnerDb();
});

/** A finished run of the analysis, submitted for review. */
async function submittedRun(): Promise<string> {
  const runId: string = (await (await clients.analyst.request('POST', `/api/analyses/${analysisId}/runs`, {})).json()).runId;
  expect(await executeRun(runId, ids.analyst, { threads: 0 })).toBe('succeeded');
  expect((await clients.analyst.request('POST', `/api/runs/${runId}/review/submit`, {})).status).toBe(200);
  return runId;
}

const signOff = (client: ApiClient, runId: string) =>
  client.request('POST', `/api/runs/${runId}/review/decision`, { decision: 'sign-off', meaning: 'reviewed, no objection', password });
const review = async (runId: string) => (await clients.analyst.request('GET', `/api/runs/${runId}/review`)).json();
const setRequired = (value: unknown) => admin.request('PATCH', `/api/admin/initiatives/${initiativeId}`, { requiredSignOffs: value });
const requiredInDb = async () =>
  Number((await ownerDb().query<{ n: number }>('SELECT required_sign_offs AS n FROM initiatives WHERE id = :initiativeId', {
    replacements: { initiativeId }, type: QueryTypes.SELECT,
  }))[0].n);
const runState = async (runId: string) => (await (await clients.analyst.request('GET', `/api/runs/${runId}?fields=status`)).json()).reviewState;

describe('the number of sign-offs an initiative requires', () => {
  it('is 1 by default, and an administrator sets it from 1 to 5; anything else is a 400 that changes nothing', async () => {
    expect(await requiredInDb()).toBe(1);
    for (const bad of [0, 6, 'two', 2.5]) {
      const refused = await setRequired(bad);
      expect(refused.status).toBe(400);
      const { error } = await refused.json();
      expect(error.code).toBe('validation-failed');
      expect(error.details[0]).toMatchObject({ path: 'requiredSignOffs' });
      expect(error.details[0].message).toMatch(/sign-off/);
      expect(await requiredInDb()).toBe(1);
    }
    expect((await clients.first.request('PATCH', `/api/admin/initiatives/${initiativeId}`, { requiredSignOffs: 2 })).status).toBe(403);
    expect(await requiredInDb()).toBe(1);
    expect((await setRequired(2)).status).toBe(204);
    expect(await requiredInDb()).toBe(2);
    const listed = await (await admin.request('GET', '/api/admin/initiatives')).json();
    expect(listed.find((i: { id: string }) => i.id === initiativeId).requiredSignOffs).toBe(2);
  });
});

describe('a run that needs two sign-offs', () => {
  it('stays submitted after one clinician signs, refuses that clinician again, and is signed off by a second', async () => {
    expect(await requiredInDb()).toBe(2);
    const runId = await submittedRun();
    expect((await review(runId)).signOffs).toEqual({ required: 2, given: 0, signedBy: [] });

    const first = await signOff(clients.first, runId);
    expect(first.status).toBe(200);
    const afterFirst = await first.json();
    expect(afterFirst.state).toBe('submitted');
    expect(afterFirst.signOffs).toEqual({ required: 2, given: 1, signedBy: [ids.first] });
    const cosigned = afterFirst.steps.at(-1);
    expect(cosigned).toMatchObject({ kind: 'co-signed', actor: { id: ids.first }, meaning: 'reviewed, no objection' });
    expect(cosigned.resultDigest).toMatch(/^[0-9a-f]{64}$/);
    expect(await runState(runId)).toBe('submitted');

    const again = await signOff(clients.first, runId);
    expect(again.status).toBe(409);
    expect((await again.json()).error.message).toMatch(/already signed/);
    expect((await review(runId)).steps).toHaveLength(2);

    const second = await signOff(clients.second, runId);
    expect(second.status).toBe(200);
    const done = await second.json();
    expect(done.state).toBe('signed-off');
    expect(done.signOffs.given).toBe(2);
    expect([...done.signOffs.signedBy].sort()).toEqual([ids.first, ids.second].sort());
    expect(done.steps.map((s: { kind: string }) => s.kind)).toEqual(['submitted', 'co-signed', 'signed-off']);
    expect(await runState(runId)).toBe('signed-off');

    const third = await signOff(clients.third, runId);
    expect(third.status).toBe(409);
    signedRunId = runId;
  });

  it('names both signers on a brief drafted from the run', async () => {
    const drafted = await clients.analyst.request('POST', `/api/runs/${signedRunId}/briefs`, { title: 'Two signers', summary: 'Signed by two clinicians.' });
    expect(drafted.status).toBe(201);
    const page = await (await clients.analyst.request('GET', `/briefs/${(await drafted.json()).id}`)).text();
    expect(page).toContain(`${names.first} and ${names.second}`);
  });

  it('tells the analyst only of the sign-off that completes the round, and keeps it waiting only for those yet to sign', async () => {
    const runId = await submittedRun();
    const count = async () => Number((await ownerDb().query<{ n: string }>(
      "SELECT count(*) AS n FROM notifications WHERE recipient_id = :analyst AND run_id = :runId AND kind = 'signed-off'",
      { replacements: { analyst: ids.analyst, runId }, type: QueryTypes.SELECT },
    ))[0].n);
    const home = async (client: ApiClient) => (await client.request('GET', '/')).text();
    expect(await home(clients.first)).toContain('1 run waiting for your review');
    expect((await signOff(clients.first, runId)).status).toBe(200);
    expect(await count()).toBe(0);
    expect(await home(clients.first)).not.toContain('waiting for your review');
    expect(await home(clients.second)).toContain('1 run waiting for your review');
    expect((await signOff(clients.second, runId)).status).toBe(200);
    expect(await count()).toBe(1);
  });

  it('ends the round when any clinician sends the run back; the next submission starts from none', async () => {
    const runId = await submittedRun();
    expect((await signOff(clients.first, runId)).status).toBe(200);
    const back = await clients.second.request('POST', `/api/runs/${runId}/review/decision`, {
      decision: 'send-back', meaning: 'returned for changes', note: 'Add the covariates the protocol names.', password,
    });
    expect(back.status).toBe(200);
    expect(await back.json()).toMatchObject({ state: 'sent-back', signOffs: { required: 2, given: 0 } });
    expect((await clients.analyst.request('POST', `/api/runs/${runId}/review/submit`, {})).status).toBe(200);
    // The first clinician's earlier signature belonged to the ended round: they may sign the new submission.
    const first = await (await signOff(clients.first, runId)).json();
    expect(first).toMatchObject({ state: 'submitted', signOffs: { required: 2, given: 1 } });
  });
});

describe('a run that needs one sign-off', () => {
  it('is signed off by the first clinician, as before', async () => {
    expect((await setRequired(1)).status).toBe(204);
    const runId = await submittedRun();
    const signed = await (await signOff(clients.third, runId)).json();
    expect(signed.state).toBe('signed-off');
    expect(signed.signOffs).toEqual({ required: 1, given: 1, signedBy: [ids.third] });
    expect(signed.steps.map((s: { kind: string }) => s.kind)).toEqual(['submitted', 'signed-off']);
  });
});
