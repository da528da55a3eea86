/**
 * The plan before the data (issue 16 §3) over HTTP: the calculator's closed form and
 * simulation, saving a plan (analysts only, each save kept), the register of prespecified
 * modifiers (stamped, never edited, withdrawn with a reason), every change audited, bad
 * input refused in words with nothing stored, and runs marked planned or exploratory from
 * the register, with planned against actual rows on the results page.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { QueryTypes } from 'sequelize';
import { planFigures } from '@/engine/planning/interactionPlan';
import { generateCallBackCohort } from '@/features/extracts/demoCohorts';
import { executeRun } from '@/features/runs/executeRun';
import { startServer, type ServerHandle } from '../browser/harness';
import { makeReadyExtract } from '../support/extractFactory';
import { closeOwnerDb, makeInitiative, ownerDb } from '../support/factories';
import { ApiClient } from '../support/http';
import { signedInMembers } from '../support/members';

const password = 'quill-harbour-meadow';
type Role = 'analyst' | 'clinician' | 'auditor' | 'outsider';
let server: ServerHandle;
let initiativeId: string;
const clients = {} as Record<Role, ApiClient>;
const ids = {} as Record<Role, string>;

const INPUTS = {
  outcome: { type: 'binary', baselineRisk: 0.2, modifierRiskRatio: 1.5 },
  mainEffect: { measure: 'risk-ratio', value: 0.7 },
  interaction: { measure: 'ratio-of-ratios', value: 0.6 },
  allocation: 0.5,
  modifierPrevalence: 0.3,
  alpha: 0.05,
} as const;

const count = async (sql: string) =>
  Number((await ownerDb().query<{ n: number }>(sql, { replacements: { initiativeId }, type: QueryTypes.SELECT }))[0].n);
const auditActions = async () =>
  (await ownerDb().query<{ action: string }>("SELECT action FROM audit_events WHERE initiative_id = :initiativeId AND (action LIKE 'plan.%' OR action LIKE 'prespecification.%') ORDER BY id", {
    replacements: { initiativeId }, type: QueryTypes.SELECT,
  })).map((row) => row.action);

beforeAll(async () => {
  server = await startServer();
  initiativeId = (await makeInitiative('Planning ward')).id;
  const other = (await makeInitiative('Other planning ward')).id;
  const signedIn = await signedInMembers(password, [
    ['analyst', initiativeId, 'analyst'], ['clinician', initiativeId, 'clinician'], ['auditor', initiativeId, 'auditor'], ['outsider', other, 'analyst'],
  ] as const);
  Object.assign(ids, signedIn.ids);
  Object.assign(clients, signedIn.clients);
});

afterAll(async () => {
  await server?.close();
  await closeOwnerDb();
});

describe('the calculator', () => {
  it('gives the engine\'s closed form and, on request, its seeded simulation, to every member', async () => {
    const response = await clients.clinician.request('POST', `/api/initiatives/${initiativeId}/plan/check`, { inputs: INPUTS, rows: 2000, simulate: true });
    expect(response.status).toBe(200);
    const body = await response.json();
    // The closed form is the engine's (checked against R in src/engine/planning/interactionPlan.test.ts).
    const expected = planFigures(INPUTS);
    expect(body.closedForm.rowsFor80).toBe(expected.rowsFor80);
    expect(body.closedForm.rowsFor90).toBe(expected.rowsFor90);
    expect(body.closedForm.powerAtRows).toBeCloseTo(0.669220238960259, 10);
    expect(body.simulation).toMatchObject({ rows: 2000, replicates: 1000 });
    expect(Math.abs(body.simulation.power - body.closedForm.powerAtRows)).toBeLessThan(4 * body.simulation.monteCarloError + 0.01);
  });

  it('refuses impossible figures in words', async () => {
    const risky = await clients.analyst.request('POST', `/api/initiatives/${initiativeId}/plan/check`, { inputs: { ...INPUTS, interaction: { measure: 'ratio-of-ratios', value: 20 } } });
    expect(risky.status).toBe(400);
    expect((await risky.json()).error.message).toMatch(/every risk must lie between 0 and 1/);
    const share = await clients.analyst.request('POST', `/api/initiatives/${initiativeId}/plan/check`, { inputs: { ...INPUTS, modifierPrevalence: 1.2 } });
    expect(share.status).toBe(400);
    expect((await share.json()).error.details[0].message).toMatch(/prevalence must be below 1/);
    const outsider = await clients.outsider.request('POST', `/api/initiatives/${initiativeId}/plan/check`, { inputs: INPUTS });
    expect(outsider.status).toBe(404);
  });
});

describe('saving a plan', () => {
  it('is for analysts; each save is kept and audited; bad input stores nothing', async () => {
    const path = `/api/initiatives/${initiativeId}/plan`;
    expect(await (await clients.auditor.request('GET', path)).json()).toEqual({ current: null, history: [] });
    expect((await clients.clinician.request('PUT', path, { inputs: INPUTS, plannedRows: 3000 })).status).toBe(403);
    expect((await clients.analyst.request('PUT', path, { inputs: INPUTS, plannedRows: 3 })).status).toBe(400);
    expect(await count('SELECT count(*)::int AS n FROM interaction_plans WHERE initiative_id = :initiativeId')).toBe(0);

    const first = await clients.analyst.request('PUT', path, { inputs: INPUTS, plannedRows: 2000, note: 'Two sites for a year.' });
    expect(first.status).toBe(200);
    const saved = await first.json();
    expect(saved.current).toMatchObject({ plannedRows: 2000, note: 'Two sites for a year.' });
    expect(saved.current.figures.closedForm.rowsFor80).toBe(planFigures(INPUTS).rowsFor80);
    const second = await (await clients.analyst.request('PUT', path, { inputs: INPUTS, plannedRows: 800 })).json();
    expect(second.current.plannedRows).toBe(800);
    expect(second.history.map((plan: { plannedRows: number }) => plan.plannedRows)).toEqual([2000]);
    // A saved plan never changes.
    await expect(ownerDb().query('UPDATE interaction_plans SET note = \'edited\' WHERE initiative_id = :initiativeId', { replacements: { initiativeId } })).rejects.toThrow(/cannot change/);
    expect(await auditActions()).toEqual(['plan.saved', 'plan.saved']);
  });
});

describe('the register of prespecified modifiers', () => {
  const path = () => `/api/initiatives/${initiativeId}/prespecified-modifiers`;
  let entryId: string;

  it('takes an entry from an analyst, stamped now, and shows it to every member', async () => {
    const refused = await clients.analyst.request('POST', path(), { modifierColumn: 'age_band', direction: 'stronger', rationale: 'Older patients are readmitted more.' });
    expect(refused.status).toBe(400);
    expect((await refused.json()).error.details[0]).toMatchObject({ path: 'where' });
    expect((await clients.clinician.request('POST', path(), { modifierColumn: 'age_band', direction: 'none', rationale: 'x' })).status).toBe(403);
    expect(await count('SELECT count(*)::int AS n FROM prespecified_modifiers WHERE initiative_id = :initiativeId')).toBe(0);

    const created = await clients.analyst.request('POST', path(), {
      modifierColumn: 'age_band', outcomeColumn: 'readmitted_30d', direction: 'stronger', where: 'patients aged 80 and over', rationale: 'Older patients are readmitted more, so a call-back can prevent more.',
    });
    expect(created.status).toBe(201);
    entryId = (await created.json()).id;
    const again = await clients.analyst.request('POST', path(), { modifierColumn: 'age_band', outcomeColumn: 'readmitted_30d', direction: 'none', rationale: 'Again.' });
    expect(again.status).toBe(409);
    const listed = await (await clients.auditor.request('GET', path())).json();
    expect(listed).toHaveLength(1);
    expect(listed[0]).toMatchObject({ modifierColumn: 'age_band', direction: 'stronger', where: 'patients aged 80 and over', withdrawn: null, registeredBy: { id: ids.analyst } });
    expect((await clients.outsider.request('GET', path())).status).toBe(404);
  });

  it('never edits an entry; a withdrawal keeps it, with the reason, once', async () => {
    await expect(ownerDb().query('UPDATE prespecified_modifiers SET direction = \'weaker\' WHERE id = :entryId', { replacements: { entryId } })).rejects.toThrow(/cannot be edited/);
    const sex = await (await clients.analyst.request('POST', path(), { modifierColumn: 'sex', direction: 'none', rationale: 'Asked for by the ward.' })).json();
    expect((await clients.analyst.request('POST', `${path()}/${sex.id}/withdraw`, { reason: '' })).status).toBe(400);
    const withdrawn = await clients.analyst.request('POST', `${path()}/${sex.id}/withdraw`, { reason: 'Not a question the ward still has.' });
    expect(withdrawn.status).toBe(200);
    const entry = (await withdrawn.json()).find((e: { id: string }) => e.id === sex.id);
    expect(entry.withdrawn).toMatchObject({ reason: 'Not a question the ward still has.' });
    expect((await clients.analyst.request('POST', `${path()}/${sex.id}/withdraw`, { reason: 'Twice.' })).status).toBe(409);
    expect(await auditActions()).toEqual(['plan.saved', 'plan.saved', 'prespecification.registered', 'prespecification.registered', 'prespecification.withdrawn']);
  });
});

describe('runs against the register and the plan', () => {
  const freshVersion = async () => (await makeReadyExtract(ids.analyst, initiativeId, generateCallBackCohort({ rows: 600 }).csv)).versionId;
  async function runOf(modifier: string, reference: string, version?: string): Promise<string> {
    const versionId = version ?? (await freshVersion());
    const created = await clients.analyst.request('POST', '/api/analyses', {
      initiativeId, extractVersionId: versionId, title: `Call-back by ${modifier}`, question: 'Does the effect differ?', prespecified: false,
      spec: {
        outcome: { column: 'readmitted_30d', type: 'binary' }, exposure: { column: 'call_back', reference: '0' },
        modifier: { column: modifier, type: 'categorical', reference }, covariates: [], model: 'logistic', ci: { level: 0.95, method: 'delta' },
      },
    });
    expect(created.status).toBe(201);
    const runId: string = (await (await clients.analyst.request('POST', `/api/analyses/${(await created.json()).id}/runs`, {})).json()).runId;
    expect(await executeRun(runId, ids.analyst, { threads: 0 })).toBe('succeeded');
    return runId;
  }
  const exploratory = async (runId: string) =>
    (await ownerDb().query<{ exploratory: boolean }>('SELECT exploratory FROM runs WHERE id = :runId', { replacements: { runId }, type: QueryTypes.SELECT }))[0].exploratory;

  it('marks a run planned when its modifier was registered before the data, and exploratory otherwise, and says so with the plan on the results page', async () => {
    const planned = await runOf('age_band', '18-44');
    expect(await exploratory(planned)).toBe(false);
    const page = await clients.clinician.request('GET', `/runs/${planned}`);
    const html = await page.text();
    expect(html).toContain('data-status="planned"');
    expect(html).toContain('Planned: registered');
    // The plan in force asks for 800 rows; this run used 600: short of 80 % power.
    expect(html).toMatch(/this run used [\d,]+ rows: power [\d.]+ %, short of 80 % power/);

    // sex was registered and then withdrawn; site was never registered.
    const withdrawn = await runOf('sex', 'F');
    expect(await exploratory(withdrawn)).toBe(true);
    expect(await (await clients.analyst.request('GET', `/runs/${withdrawn}`)).text()).toContain('entry for “sex” was withdrawn');

    // Registered only after its data were uploaded: still exploratory, and the page says why.
    const earlier = await freshVersion();
    expect((await clients.analyst.request('POST', `/api/initiatives/${initiativeId}/prespecified-modifiers`, { modifierColumn: 'site', direction: 'none', rationale: 'Sites differ in staffing.' })).status).toBe(201);
    const late = await runOf('site', 'Eastholm Community', earlier);
    expect(await exploratory(late)).toBe(true);
    expect(await (await clients.analyst.request('GET', `/runs/${late}`)).text()).toContain('was registered only after the data');
    // The same entry makes a run on data uploaded after it planned.
    expect(await exploratory(await runOf('site', 'Eastholm Community'))).toBe(false);
  });
});
