/**
 * A subgroup screen over HTTP: a "modifiers" specification is refused with a clear message
 * when its list is malformed or names a column the extract lacks; a valid one runs, stores
 * the screen (every modifier with its interaction test and Holm and BH p), and the results
 * page shows the count sentence, the exploratory standing naming the modifiers not on the
 * register, one table per modifier with a link to a full analysis, and the cautions; the
 * CSV holds the screen's records.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { runAnalysis } from '@/engine/index';
import { benjaminiHochbergAdjustment } from '@/engine/multiplicity/benjaminiHochbergAdjustment';
import { holmAdjustment } from '@/engine/multiplicity/holmAdjustment';
import { engineDataOfCsv } from '@/features/runs/engineInput';
import { generateCallBackCohort } from '@/features/extracts/demoCohorts';
import { executeRun } from '@/features/runs/executeRun';
import { RESULT_CAUTIONS } from '@/lib/cautions';
import { hashPassword } from '@/lib/server/passwords';
import { startServer, type ServerHandle } from '../browser/harness';
import { makeReadyExtract } from '../support/extractFactory';
import { addMember, closeOwnerDb, makeInitiative, makeUser } from '../support/factories';
import { ApiClient } from '../support/http';

const password = 'harbour-lantern-sedge';
let server: ServerHandle;
let initiativeId: string;
let versionId: string;
let analystId: string;
const analyst = new ApiClient();
const cohort = generateCallBackCohort({ rows: 1200 });

const spec = {
  outcome: { column: 'readmitted_30d', type: 'binary' },
  exposure: { column: 'call_back', reference: '0' },
  modifiers: [
    { column: 'age_band', type: 'categorical', reference: '18-44' },
    { column: 'sex', type: 'categorical', reference: 'F' },
    { column: 'comorbidity_score', type: 'continuous' },
  ],
  covariates: [{ column: 'prior_admissions', type: 'continuous' }],
  model: 'logistic',
  ci: { level: 0.95, method: 'delta' },
};
const body = (screen: Record<string, unknown>) => ({ initiativeId, extractVersionId: versionId, title: 'Screen of candidate modifiers', question: 'Which patient groups gain most from the call-back?', prespecified: false, spec: screen });

beforeAll(async () => {
  server = await startServer();
  initiativeId = (await makeInitiative('Screen ward')).id;
  const user = await makeUser({ passwordHash: await hashPassword(password) });
  await addMember(initiativeId, user.id, 'analyst');
  analystId = user.id;
  expect((await analyst.signIn(user.email, password)).status).toBe(204);
  ({ versionId } = await makeReadyExtract(analystId, initiativeId, cohort.csv));
});

afterAll(async () => {
  await server?.close();
  await closeOwnerDb();
});

describe('subgroup screen', () => {
  it('refuses a malformed list or an unknown column with a message, creating nothing', async () => {
    const twice = await analyst.request('POST', '/api/analyses', body({ ...spec, modifiers: [spec.modifiers[0], spec.modifiers[0]] }));
    expect(twice.status).toBe(422);
    expect(JSON.stringify(await twice.json())).toContain('listed twice');
    const both = await analyst.request('POST', '/api/analyses', body({ ...spec, modifier: spec.modifiers[0] }));
    expect(both.status).toBe(400);
    const unknown = await analyst.request('POST', '/api/analyses', body({ ...spec, modifiers: [spec.modifiers[0], { column: 'ward_colour', type: 'categorical', reference: 'red' }] }));
    expect(unknown.status).toBe(422);
    const details = ((await unknown.json()) as { error: { details: { path: string; message: string }[] } }).error.details;
    expect(details[0]).toEqual({ path: 'spec.modifiers.1.column', message: 'There is no column “ward_colour” in this extract version.' });
    const listed = (await (await analyst.request('GET', `/api/initiatives/${initiativeId}/analyses`)).json()) as { items?: unknown[] } | unknown[];
    expect(Array.isArray(listed) ? listed : (listed.items ?? [])).toHaveLength(0);
  });

  it('runs, stores every modifier, and shows the screen with its standing, links and cautions', async () => {
    const created = await analyst.request('POST', '/api/analyses', body(spec));
    expect(created.status).toBe(201);
    const { id: analysisId } = (await created.json()) as { id: string };
    const started = await analyst.request('POST', `/api/analyses/${analysisId}/runs`, {});
    expect(started.status).toBe(202);
    const { runId } = (await started.json()) as { runId: string };
    expect(await executeRun(runId, analystId, { threads: 0 })).toBe('succeeded');

    const run = (await (await analyst.request('GET', `/api/runs/${runId}`)).json()) as {
      exploratory: boolean;
      result: { screen: { examined: number; modifiers: { column: string; interaction: { p: number }; pAdjusted: { holm: number; bh: number } }[] } };
    };
    expect(run.exploratory).toBe(true);
    const screen = run.result.screen;
    expect(screen.examined).toBe(3);
    expect(screen.modifiers.map((entry) => entry.column)).toEqual(['age_band', 'sex', 'comorbidity_score']);
    // The stored screen is the engine's own, run in-process on the same extract.
    const direct = await runAnalysis(engineDataOfCsv(Buffer.from(cohort.csv)), JSON.parse(JSON.stringify(spec)));
    expect(screen.modifiers.map((entry) => entry.interaction.p)).toEqual(direct.screen!.modifiers.map((entry) => entry.interaction.p));
    // Holm and BH across the three interaction p-values (R's p.adjust "holm" and "BH" match these functions: multiplicity.test.ts).
    const raw = screen.modifiers.map((entry) => entry.interaction.p);
    expect(screen.modifiers.map((entry) => entry.pAdjusted.holm)).toEqual(holmAdjustment(raw));
    expect(screen.modifiers.map((entry) => entry.pAdjusted.bh)).toEqual(benjaminiHochbergAdjustment(raw));

    const page = await (await analyst.request('GET', `/runs/${runId}`)).text();
    expect(page).toContain('data-testid="subgroup-screen"');
    expect(page).toMatch(/Three modifiers were examined; /);
    expect(page).toContain('data-exploratory="true"');
    expect(page).toMatch(/“age_band”, “sex” and “comorbidity_score” were not prespecified/);
    expect(page.match(/data-testid="screen-modifier"/g)).toHaveLength(3);
    for (const sentence of RESULT_CAUTIONS.slice(0, 1)) expect(page).toContain(sentence.slice(0, 40));
    const links = [...page.matchAll(/href="([^"]*from=[^"]*)" data-testid="screen-full-analysis"/g)].map((match) => match[1].replace(/&amp;|&#38;/g, '&'));
    expect(links).toHaveLength(3);
    const form = await (await analyst.request('GET', links[1])).text();
    expect(form).toContain('data-testid="prefilled-from-screen"');
    expect(form).toContain('a full analysis of “sex”');

    const csv = await (await analyst.request('GET', `/api/runs/${runId}/download?format=csv`)).text();
    expect(csv).toContain(RESULT_CAUTIONS[0].slice(0, 40));
    expect(csv.match(/^screen-interaction,/gm)).toHaveLength(3);
    expect(csv).toMatch(/^screen,,,modifiers examined,.*Three modifiers were examined/m);

    // A screen has no credibility assessment of its own: the board shows it without a badge, and the endpoint says why.
    const board = await analyst.request('GET', `/initiatives/${initiativeId}/board`);
    expect(board.status).toBe(200);
    expect(await board.text()).toContain('Screen of candidate modifiers');
    const credibility = await analyst.request('GET', `/api/runs/${runId}/credibility`);
    expect(credibility.status).toBe(409);
    expect((await credibility.json()).error.message).toMatch(/subgroup screen/);

    // Nor is it compared side by side: a second run of the screen gives two runs, and the comparison says why it cannot.
    const again = (await (await analyst.request('POST', `/api/analyses/${analysisId}/runs`, {})).json()) as { runId: string };
    expect(await executeRun(again.runId, analystId, { threads: 0 })).toBe('succeeded');
    const compared = await analyst.request('GET', `/api/runs/compare?runs=${runId},${again.runId}`);
    expect(compared.status).toBe(400);
    expect((await compared.json()).error).toMatchObject({ code: 'screen-not-comparable', message: expect.stringMatching(/subgroup screen, which is not compared side by side/) });
    const comparePage = await analyst.request('GET', `/runs/compare?runs=${runId},${again.runId}`);
    expect(comparePage.status).toBe(400);
    expect(await comparePage.text()).toContain('is a subgroup screen, which is not compared side by side');
    // The analysis page offers no box to tick for them, and no compare button.
    const analysisPage = await (await analyst.request('GET', `/analyses/${analysisId}`)).text();
    expect(analysisPage).not.toContain('name="run"');
    expect(analysisPage).not.toContain('Compare the chosen runs');
    expect(analysisPage).toContain('The runs of a subgroup screen are not compared side by side');
  });
});
