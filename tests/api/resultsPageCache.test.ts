/**
 * The results page keeps a finished run's result tables as rendered HTML, once per run and
 * server process (src/features/runs/finishedHtml.ts), and its plots fetch their data from
 * GET /api/runs/{id}/plot-data. Here, against the built server: the tables every reader
 * gets equal a fresh render of the run's result; each reader still gets their own header
 * and rights; another run gets its own tables; a member of another initiative gets 404
 * from the page and the plot data even after others filled the cache, and even with the
 * plot data's entity tag.
 */
import { experimental_AstroContainer as AstroContainer } from 'astro/container';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Result, Spec } from '@/engine/boundary/schemas';
import { generateCallBackCohort } from '@/features/extracts/demoCohorts';
import { executeRun } from '@/features/runs/executeRun';
import ResultTables from '@/features/runs/ResultTables.astro';
import { plotInput } from '@/features/runs/plots/plotInput';
import { hashPassword } from '@/lib/server/passwords';
import { startServer, type ServerHandle } from '../browser/harness';
import { makeReadyExtract } from '../support/extractFactory';
import { addMember, closeOwnerDb, makeInitiative, makeUser } from '../support/factories';
import { ApiClient } from '../support/http';

const password = 'willow-ferry-lichen';
let server: ServerHandle;
let container: AstroContainer;
const people = {} as Record<'analyst' | 'clinician' | 'outsider', { client: ApiClient; email: string; id: string }>;
const runs = {} as Record<'byAge' | 'bySex', { id: string; result: Result; spec: Spec }>;

const baseSpec = {
  outcome: { column: 'readmitted_30d', type: 'binary' },
  exposure: { column: 'call_back', reference: '0' },
  covariates: [{ column: 'comorbidity_score', type: 'continuous' }],
  model: 'logistic',
  ci: { level: 0.95, method: 'delta' },
};

/** The balanced <section>…</section> of the result tables in a page. */
function resultTablesOf(html: string): string {
  const start = html.indexOf('<section class="result-tables');
  expect(start).toBeGreaterThan(-1);
  let depth = 0;
  for (const match of html.slice(start).matchAll(/<section\b|<\/section>/g)) {
    depth += match[0] === '</section>' ? -1 : 1;
    if (depth === 0) return html.slice(start, start + match.index + match[0].length);
  }
  throw new Error('unbalanced result tables section');
}

/** What the development renderer adds to elements (source annotations), which the built server does not. */
const withoutSourceNotes = (html: string) => html.replace(/ data-astro-source-(file|loc)="[^"]*"/g, '');

const page = async (who: keyof typeof people, runId: string) => {
  const response = await people[who].client.request('GET', `/runs/${runId}`);
  return { status: response.status, html: await response.text() };
};

beforeAll(async () => {
  server = await startServer();
  container = await AstroContainer.create();
  const hash = await hashPassword(password);
  const initiativeId = (await makeInitiative('Cached results ward')).id;
  const other = (await makeInitiative('Cached results, other ward')).id;
  for (const [who, role, where] of [['analyst', 'analyst', initiativeId], ['clinician', 'clinician', initiativeId], ['outsider', 'clinician', other]] as const) {
    const user = await makeUser({ passwordHash: hash });
    await addMember(where, user.id, role);
    const client = new ApiClient();
    expect((await client.signIn(user.email, password)).status).toBe(204);
    people[who] = { client, email: user.email, id: user.id };
  }
  const { versionId } = await makeReadyExtract(people.analyst.id, initiativeId, generateCallBackCohort({ rows: 800 }).csv);
  for (const [name, modifier] of [
    ['byAge', { column: 'age_band', type: 'categorical', reference: '18-44' }],
    ['bySex', { column: 'sex', type: 'categorical', reference: 'F' }],
  ] as const) {
    const created = await people.analyst.client.request('POST', '/api/analyses', {
      initiativeId, extractVersionId: versionId, title: `Cached ${name}`, question: 'Does the call-back help some patients more?', prespecified: false,
      spec: { ...baseSpec, modifier },
    });
    expect(created.status).toBe(201);
    const started = await people.analyst.client.request('POST', `/api/analyses/${(await created.json()).id}/runs`, {});
    expect(started.status).toBe(202);
    const runId = (await started.json()).runId as string;
    // No worker runs in this file: execute the queued run here, as the worker would.
    expect(await executeRun(runId, people.analyst.id, { threads: 0 })).toBe('succeeded');
    const view = await (await people.analyst.client.request('GET', `/api/runs/${runId}`)).json();
    runs[name] = { id: runId, result: view.result, spec: view.spec };
  }
});

afterAll(async () => {
  await server?.close();
  await closeOwnerDb();
});

describe('the results page of a finished run', () => {
  it('gives every reader the same tables, equal to a fresh render of the result, and each their own header and rights', async () => {
    const { byAge } = runs;
    const fresh = withoutSourceNotes(await container.renderToString(ResultTables, { props: { result: byAge.result, spec: byAge.spec, cautions: false } }));
    expect(fresh).toContain('data-testid="joint-table"');
    const first = await page('analyst', byAge.id); // renders the tables and keeps them
    const again = await page('clinician', byAge.id); // served from what was kept
    const third = await page('analyst', byAge.id);
    for (const view of [first, again, third]) {
      expect(view.status).toBe(200);
      expect(resultTablesOf(view.html)).toBe(fresh);
    }
    // The parts around the tables stay the reader's own.
    expect(first.html).toContain(people.analyst.email);
    expect(again.html).toContain(people.clinician.email);
    expect(again.html).not.toContain(people.analyst.email);
    const canDecide = (html: string) => /canDecide&quot;:\[0,(true|false)\]/.exec(html)?.[1];
    expect(canDecide(first.html)).toBe('false');
    expect(canDecide(again.html)).toBe('true');
    // The plot data are no longer inside the page.
    expect(first.html).not.toContain('coefficients');
  });

  it('keys the tables by run: another run shows its own', async () => {
    await page('clinician', runs.byAge.id);
    const bySex = await page('clinician', runs.bySex.id);
    expect(bySex.status).toBe(200);
    const fresh = withoutSourceNotes(await container.renderToString(ResultTables, { props: { result: runs.bySex.result, spec: runs.bySex.spec, cautions: false } }));
    expect(resultTablesOf(bySex.html)).toBe(fresh);
    expect(resultTablesOf(bySex.html)).not.toBe(resultTablesOf((await page('clinician', runs.byAge.id)).html));
    expect(resultTablesOf(bySex.html)).toContain('data-level="M"');
  });

  it('answers 404 to a member of another initiative, after others filled the cache', async () => {
    await page('clinician', runs.byAge.id);
    const outsider = await page('outsider', runs.byAge.id);
    expect(outsider.status).toBe(404);
    expect(outsider.html).not.toContain('result-tables');
    expect(outsider.html).not.toContain('joint-table');
  });
});

describe('GET /api/runs/{id}/plot-data', () => {
  it("answers the plots' input of the result with an entity tag, then 304 when asked again with it", async () => {
    const { byAge } = runs;
    const response = await people.clinician.client.request('GET', `/api/runs/${byAge.id}/plot-data`);
    expect(response.status).toBe(200);
    expect(response.headers.get('content-type')).toMatch(/application\/json/);
    expect(response.headers.get('cache-control')).toBe('private, no-cache');
    const etag = response.headers.get('etag');
    expect(etag).toMatch(/^"[\w-]{32}"$/);
    expect(await response.json()).toEqual(JSON.parse(JSON.stringify(plotInput(byAge.result))));
    const again = await people.analyst.client.request('GET', `/api/runs/${byAge.id}/plot-data`, undefined, { 'If-None-Match': etag! });
    expect(again.status).toBe(304);
    expect(await again.text()).toBe('');
    const other = await people.clinician.client.request('GET', `/api/runs/${runs.bySex.id}/plot-data`);
    expect(other.status).toBe(200);
    expect(other.headers.get('etag')).not.toBe(etag);
    expect(await other.json()).toEqual(JSON.parse(JSON.stringify(plotInput(runs.bySex.result))));
  });

  it('checks access on every request: 404 for another initiative even with the tag, 401 signed out', async () => {
    const { byAge } = runs;
    const etag = (await people.clinician.client.request('GET', `/api/runs/${byAge.id}/plot-data`)).headers.get('etag')!;
    expect((await people.outsider.client.request('GET', `/api/runs/${byAge.id}/plot-data`)).status).toBe(404);
    const withTag = await people.outsider.client.request('GET', `/api/runs/${byAge.id}/plot-data`, undefined, { 'If-None-Match': etag });
    expect(withTag.status).toBe(404);
    expect(withTag.headers.get('etag')).toBeNull();
    expect((await new ApiClient().request('GET', `/api/runs/${byAge.id}/plot-data`, undefined, { 'If-None-Match': etag })).status).toBe(401);
  });

  it('answers 404 for a run without a result', async () => {
    const analysisId = (await (await people.analyst.client.request('GET', `/api/runs/${runs.byAge.id}`)).json()).analysisId;
    const started = await people.analyst.client.request('POST', `/api/analyses/${analysisId}/runs`, {});
    expect(started.status).toBe(202);
    const queued = (await started.json()).runId;
    expect((await people.analyst.client.request('GET', `/api/runs/${queued}/plot-data`)).status).toBe(404);
  });
});
