/**
 * From the plan to the brief in a real browser (issue 16): the analyst saves a plan and
 * registers a modifier with its predicted direction on the Plan tab, before the data; the
 * extract arrives and an analysis of that modifier runs; the clinician rates the claim's
 * credibility on the results page; the published brief says how credible the claim is.
 * Screenshots of each step go to .test-artifacts/screenshots.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { generateCallBackCohort } from '@/features/extracts/demoCohorts';
import { executeRun } from '@/features/runs/executeRun';
import { hashPassword } from '@/lib/server/passwords';
import { saveScreenshot, signInThroughPage, startHarness, type Harness } from './harness';
import { makeReadyExtract } from '../support/extractFactory';
import { addMember, closeOwnerDb, makeInitiative, makeUser } from '../support/factories';
import { ApiClient } from '../support/http';

const password = 'thistle-causeway-ember';
let harness: Harness;
let initiativeId = '';
const people = {} as Record<'analyst' | 'clinician', { id: string; email: string }>;
let runId = '';

beforeAll(async () => {
  harness = await startHarness();
  const hash = await hashPassword(password);
  initiativeId = (await makeInitiative('Credibility walk ward')).id;
  for (const role of ['analyst', 'clinician'] as const) {
    const user = await makeUser({ passwordHash: hash });
    await addMember(initiativeId, user.id, role);
    people[role] = { id: user.id, email: user.email };
  }
}, 120_000);

afterAll(async () => {
  await harness?.close();
  await closeOwnerDb();
});

describe('plan, register, analysis, credibility, brief', () => {
  it('saves a plan and registers a modifier on the Plan tab', async () => {
    const { page, context, consoleErrors } = await harness.newPage();
    await signInThroughPage(page, people.analyst.email, password);
    await page.goto(`/initiatives/${initiativeId}/plan`);
    await page.locator('form[aria-labelledby="calculator-heading"] fieldset[data-hydrated="true"]').waitFor();
    await page.getByLabel('Rows you expect to have (optional)').fill('800');
    await page.getByRole('button', { name: 'Calculate', exact: true }).click();
    await page.getByTestId('plan-rows-80').waitFor();
    await page.getByRole('button', { name: "Save as the initiative's plan" }).click();
    await page.getByTestId('plan-current').getByText('Planned rows:').waitFor();
    await expect(page.getByTestId('plan-current').textContent()).resolves.toContain('800 rows');

    const register = page.getByRole('form', { name: 'Register a modifier' });
    await register.locator('fieldset[data-hydrated="true"]').waitFor();
    await page.getByLabel('Modifier column').fill('sex');
    await page.getByLabel('Outcome column (leave empty for any outcome)').fill('readmitted_30d');
    await page.getByLabel('Predicted direction').selectOption('stronger');
    await page.getByLabel('Where (a level, or "higher values")').fill('M');
    await page.getByLabel('Clinical or biological reason').fill('Men are reached less often by the call-back team.');
    await page.getByRole('button', { name: 'Register, stamped now' }).click();
    await page.getByTestId('register-table').getByText('“sex” on “readmitted_30d”').waitFor();
    await saveScreenshot(page, 'credibility-1-plan-and-register');
    expect(consoleErrors).toEqual([]);
    await context.close();
  });

  it('runs an analysis of the registered modifier on data that arrived after the register', async () => {
    const { versionId } = await makeReadyExtract(people.analyst.id, initiativeId, generateCallBackCohort({ rows: 800 }).csv);
    const analyst = new ApiClient();
    expect((await analyst.signIn(people.analyst.email, password)).status).toBe(204);
    const created = await analyst.request('POST', '/api/analyses', {
      initiativeId, extractVersionId: versionId, title: 'Call-back by sex', question: 'Does the call-back help men more?', prespecified: false,
      spec: {
        outcome: { column: 'readmitted_30d', type: 'binary' }, exposure: { column: 'call_back', reference: '0' },
        modifier: { column: 'sex', type: 'categorical', reference: 'F' }, covariates: [], model: 'logistic', ci: { level: 0.95, method: 'delta' },
      },
    });
    expect(created.status).toBe(201);
    runId = (await (await analyst.request('POST', `/api/analyses/${(await created.json()).id}/runs`, {})).json()).runId;
    expect(await executeRun(runId, people.analyst.id, { threads: 0 })).toBe('succeeded');
    expect((await analyst.request('POST', `/api/runs/${runId}/review/submit`, {})).status).toBe(200);
  });

  it('lets the clinician rate the credibility on the results page, and the rating is no longer provisional', async () => {
    const { page, context, consoleErrors } = await harness.newPage();
    await signInThroughPage(page, people.clinician.email, password);
    await page.goto(`/runs/${runId}`);
    const panel = page.getByTestId('credibility-panel');
    await expect(panel.getByTestId('credibility-item-prespecified').textContent()).resolves.toContain('Yes: registered before the data arrived');
    await expect(panel.getByTestId('credibility-item-direction').textContent()).resolves.toContain('Predicted: a stronger effect in M.');
    await expect(panel.textContent()).resolves.toContain('Provisional');
    await panel.locator('form fieldset[data-hydrated="true"]').waitFor();
    await page.getByLabel('Clinical or biological reason for the difference').selectOption('plausible');
    await page.getByLabel('Note on the reason (optional)').fill('Fewer men answer the first call.');
    await page.getByLabel('Agreement with earlier evidence').selectOption('contradicts');
    await page.getByRole('button', { name: 'Save the ratings' }).click();
    await panel.getByText('Saved. The overall rating above is updated.').waitFor();
    await expect(panel.textContent()).resolves.not.toContain('Provisional');
    await expect(panel.getByTestId('credibility-reasons').textContent()).resolves.toContain('Earlier evidence points the other way.');
    await expect(panel.getByTestId('credibility-item-rationale').textContent()).resolves.toContain('Fewer men answer the first call.');
    await saveScreenshot(page, 'credibility-2-rated-by-the-clinician');
    expect(consoleErrors).toEqual([]);
    await context.close();
  });

  it('shows the rating and its reasons in the brief', async () => {
    const clinician = new ApiClient();
    expect((await clinician.signIn(people.clinician.email, password)).status).toBe(204);
    expect((await clinician.request('POST', `/api/runs/${runId}/review/decision`, { decision: 'sign-off', meaning: 'reviewed, no objection', password })).status).toBe(200);
    const analyst = new ApiClient();
    expect((await analyst.signIn(people.analyst.email, password)).status).toBe(204);
    const drafted = await analyst.request('POST', `/api/runs/${runId}/briefs`, { title: 'Call-back by sex', summary: 'Whether the call-back helps men more.' });
    expect(drafted.status).toBe(201);
    const briefId = (await drafted.json()).id;
    expect((await analyst.request('POST', `/api/briefs/${briefId}/publish`, {})).status).toBeLessThan(300);
    const level = (await (await analyst.request('GET', `/api/runs/${runId}/credibility`)).json()).overall.label;

    const { page, context, consoleErrors } = await harness.newPage();
    await signInThroughPage(page, people.clinician.email, password);
    await page.goto(`/briefs/${briefId}`);
    const paragraph = page.getByTestId('brief-credibility');
    await expect(paragraph.textContent()).resolves.toContain(level);
    await expect(paragraph.textContent()).resolves.toContain('earlier evidence points the other way');
    await paragraph.scrollIntoViewIfNeeded();
    await saveScreenshot(page, 'credibility-3-brief');
    expect(consoleErrors).toEqual([]);
    await context.close();
  });
});
