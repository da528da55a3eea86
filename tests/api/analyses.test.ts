/**
 * Analyses and runs over HTTP: who may create, edit, start, cancel and download; what
 * another initiative's members see (404 for every id, API and pages); field messages for
 * a specification that does not fit the extract; and the audited downloads.
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

const password = 'harbour-lantern-sedge';
let server: ServerHandle;
let initiativeId: string;
let versionId: string;
let analystId: string;
const clients: Record<'analyst' | 'clinician' | 'auditor' | 'outsider', ApiClient> = {} as never;

const spec = {
  outcome: { column: 'readmitted_30d', type: 'binary' },
  exposure: { column: 'call_back', reference: '0' },
  modifier: { column: 'age_band', type: 'categorical', reference: '18-44' },
  covariates: [{ column: 'comorbidity_score', type: 'continuous' }],
  model: 'logistic',
  ci: { level: 0.95, method: 'delta' },
};
const body = () => ({ initiativeId, extractVersionId: versionId, title: 'By age band', question: 'Does the call-back help older patients more?', prespecified: true, spec });

beforeAll(async () => {
  server = await startServer();
  const hash = await hashPassword(password);
  initiativeId = (await makeInitiative('Analysis ward')).id;
  const other = (await makeInitiative('Other ward')).id;
  for (const [role, where] of [['analyst', initiativeId], ['clinician', initiativeId], ['auditor', initiativeId], ['outsider', other]] as const) {
    const user = await makeUser({ passwordHash: hash });
    await addMember(where, user.id, role === 'outsider' ? 'analyst' : role);
    if (role === 'analyst') analystId = user.id;
    const client = new ApiClient();
    expect((await client.signIn(user.email, password)).status).toBe(204);
    clients[role] = client;
  }
  ({ versionId } = await makeReadyExtract(analystId, initiativeId, generateCallBackCohort({ rows: 1200 }).csv));
});

afterAll(async () => {
  await server?.close();
  await closeOwnerDb();
});

describe('creating and changing analyses', () => {
  it('is for analysts only', async () => {
    for (const role of ['clinician', 'auditor'] as const) {
      expect((await clients[role].request('POST', '/api/analyses', body())).status).toBe(403);
    }
    expect((await clients.outsider.request('POST', '/api/analyses', body())).status).toBe(404);
    const created = await clients.analyst.request('POST', '/api/analyses', body());
    expect(created.status).toBe(201);
    const { id } = await created.json();
    for (const role of ['clinician', 'auditor'] as const) {
      expect((await clients[role].request('PATCH', `/api/analyses/${id}`, { ...body(), title: 'Changed' })).status).toBe(403);
      expect((await clients[role].request('POST', `/api/analyses/${id}/runs`, {})).status).toBe(403);
      expect((await clients[role].request('GET', `/api/analyses/${id}`)).status).toBe(200);
    }
    const changed = await clients.analyst.request('PATCH', `/api/analyses/${id}`, { ...body(), title: 'By age band, adjusted' });
    expect(changed.status).toBe(204);
    const events = await ownerDb().query<{ action: string }>(
      'SELECT action FROM audit_events WHERE subject_id = :id ORDER BY chain_position', { replacements: { id }, type: QueryTypes.SELECT },
    );
    expect(events.map((e) => e.action)).toEqual(['analysis.created', 'analysis.changed']);
  });

  it('names the field when the specification does not fit the extract', async () => {
    const bad = { ...body(), spec: { ...spec, modifier: { ...spec.modifier, reference: '12-17' } } };
    const response = await clients.analyst.request('POST', '/api/analyses', bad);
    expect(response.status).toBe(422);
    const error = (await response.json()).error;
    expect(error.details[0]).toMatchObject({ path: 'spec.modifier.reference' });
    expect(error.details[0].message).toContain('12-17');
    const wrongType = await clients.analyst.request('POST', '/api/analyses', { ...body(), spec: { ...spec, outcome: { column: 'age_band', type: 'binary' } } });
    expect(wrongType.status).toBe(422);
    expect((await wrongType.json()).error.details[0].path).toBe('spec.outcome.column');
    const missing = await clients.analyst.request('POST', '/api/analyses', { ...body(), spec: { ...spec, model: 'quadratic' } });
    expect(missing.status).toBe(400);
  });
});

describe('runs', () => {
  let analysisId: string;
  let runId: string;

  beforeAll(async () => {
    analysisId = (await (await clients.analyst.request('POST', '/api/analyses', body())).json()).id;
    const started = await clients.analyst.request('POST', `/api/analyses/${analysisId}/runs`, {});
    expect(started.status).toBe(202);
    runId = (await started.json()).runId;
    // No worker runs in this file: execute the queued run here, as the worker would.
    expect(await executeRun(runId, analystId, { threads: 0 })).toBe('succeeded');
  });

  it('answers status, progress and the engine result', async () => {
    const response = await clients.clinician.request('GET', `/api/runs/${runId}`);
    expect(response.status).toBe(200);
    const run = await response.json();
    expect(run).toMatchObject({ status: 'succeeded', progress: { fraction: 1 } });
    expect(run.result.engineVersion).toBe(run.engineVersion);
    expect(run.result.strata.map((s: { level: string }) => s.level).sort()).toEqual(['18-44', '45-64', '65-79', '80+']);
    const light = await (await clients.clinician.request('GET', `/api/runs/${runId}?fields=status`)).json();
    expect(light.result).toBeNull();
  });

  it('downloads JSON and CSV with the caution, and records each download', async () => {
    const json = await clients.auditor.request('GET', `/api/runs/${runId}/download?format=json`);
    expect(json.status).toBe(200);
    expect(json.headers.get('content-disposition')).toMatch(/attachment; filename="crossgrain-run-/);
    const document = await json.json();
    expect(document.caution).toMatch(/not clinical guidance/);
    expect(document.specHash).toMatch(/^[0-9a-f]{64}$/);
    const csv = await clients.clinician.request('GET', `/api/runs/${runId}/download?format=csv`);
    expect(csv.headers.get('content-type')).toMatch(/text\/csv/);
    const text = await csv.text();
    expect(text.split('\n')[0]).toMatch(/exploratory/i);
    const downloads = await ownerDb().query<{ details: { format: string } }>(
      "SELECT details FROM audit_events WHERE action = 'run.downloaded' AND subject_id = :id ORDER BY chain_position",
      { replacements: { id: runId }, type: QueryTypes.SELECT },
    );
    expect(downloads.map((d) => d.details.format)).toEqual(['json', 'csv']);
  });

  it('is re-run by an auditor to verify it, and reproduces bit for bit (product brief, audit step)', async () => {
    for (const role of ['analyst', 'clinician'] as const) {
      expect((await clients[role].request('POST', `/api/runs/${runId}/verify`, {})).status, role).toBe(403);
    }
    expect((await clients.outsider.request('POST', `/api/runs/${runId}/verify`, {})).status).toBe(404);
    const started = await clients.auditor.request('POST', `/api/runs/${runId}/verify`, {});
    expect(started.status).toBe(202);
    const rerunId = (await started.json()).runId;
    const auditorId = (await (await clients.auditor.request('GET', '/api/me')).json()).id;
    // The worker acts as the auditor for the re-run (row-level security lets it, and only it).
    expect(await executeRun(rerunId, auditorId, { threads: 0 })).toBe('succeeded');
    const rerun = await (await clients.clinician.request('GET', `/api/runs/${rerunId}`)).json();
    expect(rerun.verifiesRunId).toBe(runId);
    expect(rerun.verification.reproduced).toBe(true);
    expect(rerun.verification.checks.map((c: { name: string; same: boolean }) => [c.name, c.same])).toEqual([
      ['extract', true], ['specification', true], ['engine', true], ['seed', true], ['result', true],
    ]);
    const page = await (await clients.auditor.request('GET', `/runs/${rerunId}`)).text();
    expect(page).toContain('Reproduced bit for bit');
    expect(await (await clients.auditor.request('GET', `/runs/${runId}`)).text()).toContain('reproduced bit for bit');
    const events = await ownerDb().query<{ action: string; details: { reproduced?: boolean; rerunId?: string } }>(
      "SELECT action, details FROM audit_events WHERE action IN ('run.verification-started', 'run.verified') AND (subject_id = :run OR subject_id = :rerun) ORDER BY chain_position",
      { replacements: { run: runId, rerun: rerunId }, type: QueryTypes.SELECT },
    );
    expect(events.map((e) => e.action)).toEqual(['run.verification-started', 'run.verified']);
    expect(events[1].details).toMatchObject({ rerunId, reproduced: true });
  });

  it('lets the auditor cancel their own queued re-run, and nobody else’s run', async () => {
    const rerunId = (await (await clients.auditor.request('POST', `/api/runs/${runId}/verify`, {})).json()).runId;
    expect((await clients.clinician.request('POST', `/api/runs/${rerunId}/cancel`, {})).status).toBe(403);
    const cancelled = await clients.auditor.request('POST', `/api/runs/${rerunId}/cancel`, {});
    expect(cancelled.status).toBe(200);
    expect((await cancelled.json()).status).toBe('cancelled');
    const queued = (await (await clients.analyst.request('POST', `/api/analyses/${analysisId}/runs`, {})).json()).runId;
    expect((await clients.auditor.request('POST', `/api/runs/${queued}/cancel`, {})).status).toBe(403);
    expect((await clients.analyst.request('POST', `/api/runs/${queued}/cancel`, {})).status).toBe(200);
  });

  it('reports a stored result that no longer matches what the engine computes', async () => {
    const auditorId = (await (await clients.auditor.request('GET', '/api/me')).json()).id;
    // Alter one stored estimate behind the application's back, as a database owner could.
    const altered = (await ownerDb().query<{ result: { strata: { effect: { estimate: number } }[] } }>(
      'SELECT result FROM runs WHERE id = :id', { replacements: { id: runId }, type: QueryTypes.SELECT },
    ))[0].result;
    const before = altered.strata[0].effect.estimate;
    altered.strata[0].effect.estimate = before * 1.01;
    await ownerDb().query('UPDATE runs SET result = CAST(:result AS jsonb) WHERE id = :id', { replacements: { id: runId, result: JSON.stringify(altered) } });
    try {
      const rerunId = (await (await clients.auditor.request('POST', `/api/runs/${runId}/verify`, {})).json()).runId;
      expect(await executeRun(rerunId, auditorId, { threads: 0 })).toBe('succeeded');
      const { verification } = await (await clients.auditor.request('GET', `/api/runs/${rerunId}?fields=status`)).json();
      expect(verification.reproduced).toBe(false);
      expect(verification.differences[0]).toEqual({ path: 'strata[0].effect.estimate', original: String(before * 1.01), rerun: String(before) });
      expect(verification.differenceCount).toBe(1);
      expect(await (await clients.auditor.request('GET', `/runs/${rerunId}`)).text()).toContain('Not reproduced: the inputs are the same, and 1 result value differs.');
    } finally {
      altered.strata[0].effect.estimate = before;
      await ownerDb().query('UPDATE runs SET result = CAST(:result AS jsonb) WHERE id = :id', { replacements: { id: runId, result: JSON.stringify(altered) } });
    }
  });

  it('cancels a queued run at once, and only an analyst may', async () => {
    const queued = (await (await clients.analyst.request('POST', `/api/analyses/${analysisId}/runs`, {})).json()).runId;
    expect((await clients.clinician.request('POST', `/api/runs/${queued}/cancel`, {})).status).toBe(403);
    const cancelled = await clients.analyst.request('POST', `/api/runs/${queued}/cancel`, {});
    expect(await cancelled.json()).toEqual({ status: 'cancelled' });
    expect(await executeRun(queued, analystId, { threads: 0 })).toBe('not-queued');
    expect((await (await clients.analyst.request('GET', `/api/runs/${queued}?fields=status`)).json()).status).toBe('cancelled');
  });

  it('hides every analysis and run id from another initiative, in the API and on pages', async () => {
    const outsider = clients.outsider;
    for (const path of [
      `/api/analyses/${analysisId}`, `/api/analyses/${analysisId}/runs`, `/api/runs/${runId}`, `/api/runs/${runId}/download?format=json`,
      `/api/initiatives/${initiativeId}/analyses`,
    ]) {
      expect((await outsider.request('GET', path)).status, path).toBe(404);
    }
    expect((await outsider.request('POST', `/api/analyses/${analysisId}/runs`, {})).status).toBe(404);
    expect((await outsider.request('POST', `/api/runs/${runId}/cancel`, {})).status).toBe(404);
    expect((await outsider.request('PATCH', `/api/analyses/${analysisId}`, body())).status).toBe(404);
    for (const path of [`/analyses/${analysisId}`, `/analyses/${analysisId}/edit`, `/runs/${runId}`, `/runs/compare?a=${runId}&b=${runId}`, `/initiatives/${initiativeId}/analyses`]) {
      const page = await outsider.request('GET', path);
      expect(page.status, path).toBe(404);
      expect(await page.text()).not.toContain('By age band');
    }
  });

  it('explains how to compare when no two runs were chosen', async () => {
    for (const path of ['/runs/compare', '/runs/compare?a=not-an-id&b=']) {
      const page = await clients.analyst.request('GET', path);
      expect(page.status, path).toBe(400);
      expect(await page.text(), path).toContain('Choose two runs first');
    }
  });
});
