/**
 * Briefs in a real browser, on the synthetic demo data: the demo clinician signs off a
 * run of the demo analyst on the demo extract; the analyst drafts a brief from it on its results
 * page, previews it, and publishes it; the demo clinician and auditor read it; the PDF
 * downloads; the analyst sends it and the e-mail, PDF attached, reaches the fake mail
 * server, where the administrator's outbox shows the attachment.
 */
import { readFileSync } from 'node:fs';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { QueryTypes } from 'sequelize';
import { seedDemo } from '../../db/seed';
import { seedDemoExtracts } from '../../db/seeds/demoExtracts';
import { DEMO_PASSWORD, demoEmail } from '../../db/seeds/demo';
import { SpecSchema } from '@/engine/boundary/schemas';
import { createAnalysis } from '@/features/analyses/analyses.server';
import { executeRun } from '@/features/runs/executeRun';
import { startRun } from '@/features/runs/runs.server';
import { withIdentity } from '@/lib/server/db';
import { listMessages, readMessage } from '@/features/admin/outbox';
import { mailDir, saveScreenshot, signInThroughPage, startHarness, type Harness } from './harness';
import { closeOwnerDb, ownerDb } from '../support/factories';
import { ApiClient } from '../support/http';

let harness: Harness;
let runId = '';
let briefUrl = '';
const briefTitle = `Call-back and age, brief ${Date.now().toString(36)}`;

beforeAll(async () => {
  await seedDemo(ownerDb());
  await seedDemoExtracts();
  harness = await startHarness();
  // A run of the demo analyst on the demo extract (the seeded demo analyses are left as
  // they are for the other files), submitted and signed off by the demo clinician.
  const [demo] = await ownerDb().query<{ initiative_id: string; version_id: string; analyst_id: string }>(
    `SELECT i.id AS initiative_id, v.id AS version_id, u.id AS analyst_id
       FROM initiatives i JOIN extract_versions v ON v.initiative_id = i.id AND v.status = 'ready' JOIN users u ON u.email = :email
      WHERE i.slug = 'call-back-72h' ORDER BY v.version_number LIMIT 1`,
    { replacements: { email: demoEmail('analyst') }, type: QueryTypes.SELECT },
  );
  const actor = { id: demo.analyst_id, clientAddress: 'test' };
  const { id: analysisId } = await withIdentity(actor.id, (t) =>
    createAnalysis(t, actor, {
      initiativeId: demo.initiative_id, extractVersionId: demo.version_id, title: 'Call-back by age band, for a brief',
      question: 'Does the 72-hour call-back prevent more readmissions in older patients?', prespecified: true,
      spec: SpecSchema.parse({
        outcome: { column: 'readmitted_30d', type: 'binary' }, exposure: { column: 'call_back', reference: '0' },
        modifier: { column: 'age_band', type: 'categorical', reference: '18-44' }, covariates: [{ column: 'sex', type: 'categorical', reference: 'F' }],
        model: 'logistic', ci: { level: 0.95, method: 'delta' },
      }),
    }),
  );
  ({ runId } = await withIdentity(actor.id, (t) => startRun(t, actor, analysisId)));
  expect(await executeRun(runId, actor.id, { threads: 0 })).toBe('succeeded');
  const analyst = new ApiClient();
  expect((await analyst.signIn(demoEmail('analyst'), DEMO_PASSWORD)).status).toBe(204);
  expect((await analyst.request('POST', `/api/runs/${runId}/review/submit`, {})).status).toBe(200);
  const clinician = new ApiClient();
  expect((await clinician.signIn(demoEmail('clinician'), DEMO_PASSWORD)).status).toBe(204);
  const decided = await clinician.request('POST', `/api/runs/${runId}/review/decision`, {
    decision: 'sign-off', note: 'Checked the table against the protocol; fit for an internal brief.', meaning: 'approved for an internal brief', password: DEMO_PASSWORD,
  });
  expect(decided.status).toBe(200);
}, 180_000);

afterAll(async () => {
  await harness?.close();
  await closeOwnerDb();
});

describe('a brief from the signed-off demo run', () => {
  it('is drafted, previewed and published by the demo analyst', async () => {
    const { page, context, consoleErrors } = await harness.newPage();
    await signInThroughPage(page, demoEmail('analyst'), DEMO_PASSWORD);
    await page.goto(`/runs/${runId}`);
    const form = page.getByTestId('draft-brief-form');
    await form.locator('fieldset[data-hydrated="true"]').waitFor();
    // An empty title is refused with a message and nothing is drafted.
    await page.getByLabel('Short summary').fill('The call-back seems to prevent more readmissions in older patients.');
    await page.getByTestId('draft-brief').click();
    await expect(page.getByTestId('draft-brief-error').textContent()).resolves.toContain('Give the brief a title.');
    await page.getByLabel('Title', { exact: true }).fill(briefTitle);
    await page.getByTestId('draft-brief').click();
    await page.waitForURL(/\/briefs\/[0-9a-f-]{36}$/);
    briefUrl = new URL(page.url()).pathname;
    await expect(page.getByTestId('brief-document').textContent()).resolves.toContain('draft preview, not published');
    await page.locator('[data-testid="brief-draft-form"] fieldset[data-hydrated="true"]').waitFor();
    await page.getByLabel(/Cautions of your own/).fill('Two sites changed their call script during the period.');
    await page.getByTestId('brief-save').click();
    // The saved preview (after the page reloads) lists the analyst's own caution in the brief itself.
    await page.locator('[data-testid="brief-cautions"] [data-own-caution]', { hasText: 'Two sites changed their call script during the period.' }).waitFor();
    await page.getByTestId('brief-key-table').waitFor();
    expect(await page.getByTestId('brief-cautions').textContent()).toContain('not clinical guidance');
    expect(await page.getByTestId('brief-key-table').count()).toBe(1);
    expect(await page.getByTestId('brief-plot').count()).toBe(1);
    await saveScreenshot(page, 'brief-draft-1366');
    await page.locator('[data-testid="brief-draft-form"] fieldset[data-hydrated="true"]').waitFor();
    await page.getByTestId('brief-publish').click();
    await page.getByTestId('brief-versions').waitFor();
    expect(await page.getByTestId('brief-state').textContent()).toBe('Published');
    expect(await page.getByTestId('brief-sign-off').textContent()).toContain('Dr Colm Reed');
    await saveScreenshot(page, 'brief-published-1366');
    await page.setViewportSize({ width: 390, height: 844 });
    await saveScreenshot(page, 'brief-published-390');
    // The one refused request above is the empty title, on purpose.
    expect(consoleErrors.filter((text) => !text.includes('status of 400'))).toEqual([]);
    await context.close();
  });

  it('is read by the demo clinician and auditor, and its PDF downloads', async () => {
    for (const role of ['clinician', 'auditor'] as const) {
      const { page, context, consoleErrors } = await harness.newPage();
      await signInThroughPage(page, demoEmail(role), DEMO_PASSWORD);
      await page.goto(briefUrl);
      expect(await page.getByRole('heading', { level: 1, name: briefTitle }).count()).toBe(1);
      expect(await page.getByTestId('brief-draft-form').count()).toBe(0);
      const [download] = await Promise.all([page.waitForEvent('download'), page.getByTestId('brief-pdf-link').click()]);
      const file = await download.path();
      expect(readFileSync(file).subarray(0, 5).toString('latin1')).toBe('%PDF-');
      expect(download.suggestedFilename()).toMatch(/^brief-[0-9a-f]{8}-v1\.pdf$/);
      // The Briefs tab lists it with its version.
      await page.getByRole('navigation', { name: 'Initiative sections' }).getByRole('link', { name: 'Briefs' }).click();
      expect(await page.getByTestId('briefs-table').textContent()).toContain(briefTitle);
      expect(consoleErrors).toEqual([]);
      await context.close();
    }
  });

  it('is e-mailed with its PDF to the fake mail server, and the outbox shows the attachment', async () => {
    const { page, context } = await harness.newPage();
    await signInThroughPage(page, demoEmail('analyst'), DEMO_PASSWORD);
    await page.goto(briefUrl);
    await page.locator('[data-testid="brief-send"]').waitFor();
    await page.locator('fieldset[data-hydrated="true"]').first().waitFor();
    await page.getByLabel(/More recipients for this send/).fill('not an address');
    await page.getByTestId('brief-send-button').click();
    await page.getByText('Each recipient must be a valid e-mail address.').waitFor();
    await page.getByLabel(/More recipients for this send/).fill('ward.manager@tern-valley.example');
    await page.getByTestId('brief-send-button').click();
    await expect(page.getByTestId('brief-sent').textContent()).resolves.toContain('Sent to 1 recipient');
    await context.close();

    const listing = await listMessages({ dir: mailDir, pageSize: 100 });
    const summary = listing.messages.find((message) => message.subject === `Brief: ${briefTitle}`);
    expect(summary).toBeDefined();
    const message = await readMessage(summary!.id, { dir: mailDir });
    expect(message.to).toContain('ward.manager@tern-valley.example');
    expect(message.attachments.map((file) => file.contentType)).toEqual(['application/pdf']);
    expect(message.text).toContain('The call-back seems to prevent more readmissions');

    const admin = await harness.newPage();
    await signInThroughPage(admin.page, demoEmail('admin'), DEMO_PASSWORD);
    await admin.page.goto(`/admin/outbox/${summary!.id}`);
    expect(await admin.page.getByTestId('message-attachments').textContent()).toContain('application/pdf');
    await admin.context.close();
  });
});
