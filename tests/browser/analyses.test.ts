/**
 * Analyses and runs in a real browser, on the synthetic demo data: the demo analyst
 * creates an analysis by age band through the form, runs it, watches the progress and
 * reads the table and plots, whose numbers must equal the engine's stored result; the
 * demo clinician opens the same run read-only; a continuous-modifier run shows the
 * significance band plot.
 */
import { readFileSync, writeFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { seedDemo } from '../../db/seed';
import { seedDemoExtracts } from '../../db/seeds/demoExtracts';
import { DEMO_PASSWORD, demoEmail } from '../../db/seeds/demo';
import { saveScreenshot, signInThroughPage, startHarness, startWorker, waitForHydrated, type Harness } from './harness';
import { closeOwnerDb, ownerDb } from '../support/factories';

let harness: Harness;
let worker: ReturnType<typeof startWorker>;
let runUrl = '';

beforeAll(async () => {
  await seedDemo(ownerDb());
  await seedDemoExtracts();
  harness = await startHarness();
  worker = startWorker();
});

afterAll(async () => {
  await worker?.stop();
  await harness?.close();
  await closeOwnerDb();
});


interface StoredRun {
  status: string;
  result: {
    strata: { level: string; effect: { estimate: number } }[];
    interaction: { additive: { level: string; reri: { estimate: number } | null }[]; omnibus: { p: number } };
  };
}

describe('an analysis by age band', () => {
  it('is created through the form, run, and read with numbers equal to the engine result', async () => {
    const { page, context, consoleErrors } = await harness.newPage();
    await signInThroughPage(page, demoEmail('analyst'), DEMO_PASSWORD);
    await page.getByRole('navigation', { name: 'Initiatives' }).getByRole('link', { name: /Call-back within 72 hours/ }).click();
    await page.getByRole('navigation', { name: 'Initiative sections' }).getByRole('link', { name: 'Analyses' }).click();
    await page.getByRole('link', { name: 'New analysis' }).click();
    const form = page.getByTestId('analysis-form');
    // With several ready extracts (other test files may have uploaded some) the page asks which.
    const chooser = page.getByRole('link', { name: /Discharges with call-back status \(synthetic\)/ });
    await form.or(chooser).first().waitFor();
    if (await chooser.count()) await chooser.click();
    await waitForHydrated(page, 'analysis-form');
    await page.getByLabel('Title', { exact: true }).fill('Call-back effect by age band');
    await page.getByLabel('Question', { exact: true }).fill('Does the 72-hour call-back prevent more readmissions in older patients?');
    await page.getByLabel('Outcome', { exact: true }).selectOption('readmitted_30d');
    await page.getByLabel('Intervention', { exact: true }).selectOption('call_back');
    await page.getByLabel('Modifier', { exact: true }).selectOption('age_band');
    for (const covariate of ['sex', 'comorbidity_score', 'prior_admissions', 'site']) {
      await form.getByRole('checkbox', { name: new RegExp(`^${covariate}`) }).check();
    }
    await expect(page.getByTestId('model-equation').first().textContent()).resolves.toContain('call_back');
    await saveScreenshot(page, 'analysis-form');
    await page.getByTestId('analysis-submit').click();
    await page.waitForURL(/\/analyses\/[0-9a-f-]{36}$/);
    await expect(page.getByTestId('analysis-title').textContent()).resolves.toBe('Call-back effect by age band');

    await page.getByRole('button', { name: 'Run this analysis' }).click();
    await page.getByTestId('run-progress').or(page.getByTestId('run-finished')).first().waitFor();
    await page.getByTestId('run-finished').waitFor({ timeout: 60_000 });
    await page.getByRole('link', { name: 'Read the results' }).click();
    await page.waitForURL(/\/runs\/[0-9a-f-]{36}$/);
    runUrl = page.url();
    await page.getByTestId('result-cautions').waitFor();
    await page.getByTestId('plot-stratum-forest').locator('.main-svg').first().waitFor();
    await page.getByTestId('plot-profile').locator('.main-svg').first().waitFor();

    // Every number on the page comes from the stored engine result.
    const runId = runUrl.split('/').pop()!;
    const stored = (await (await page.request.get(`/api/runs/${runId}`)).json()) as StoredRun;
    expect(stored.status).toBe('succeeded');
    for (const stratum of stored.result.strata) {
      const shown = await page.getByTestId(`stratum-effect-${stratum.level}`).first().getAttribute('data-estimate');
      expect(Number(shown)).toBe(stratum.effect.estimate);
    }
    for (const row of stored.result.interaction.additive) {
      if (!row.reri) continue;
      const shown = await page.getByTestId(`reri-${row.level}`).first().getAttribute('data-estimate');
      expect(Number(shown)).toBe(row.reri.estimate);
    }
    expect(Number(await page.getByTestId('omnibus-p').first().getAttribute('data-value'))).toBe(stored.result.interaction.omnibus.p);
    // The caution block sits above the results.
    const cautionTop = (await page.getByTestId('result-cautions').first().boundingBox())!.y;
    const tablesTop = (await page.getByTestId('result-tables').boundingBox())!.y;
    expect(cautionTop).toBeLessThan(tablesTop);
    // The specification is said once; the extract's hash is short, with a Copy button for the whole of it.
    const specSentence = (await page.getByTestId('spec-in-words').textContent())!;
    expect(await page.getByText(specSentence, { exact: true }).count()).toBe(1);
    const hash = page.getByTestId('run-extract-sha');
    expect((await hash.locator('[data-hash]').textContent())!.length).toBeLessThan(20);
    expect(await hash.locator('[data-hash]').getAttribute('data-hash')).toMatch(/^[0-9a-f]{64}$/);
    await expect(hash.getByRole('button', { name: 'Copy the whole SHA-256 of the extract' }).count()).resolves.toBe(1);
    // The crude cross-check, the reading line above the joint effects, and the reference per interaction row.
    await expect(page.getByTestId('crude-comparison').textContent()).resolves.toMatch(/adjusted model/);
    await expect(page.getByTestId('joint-reading').textContent()).resolves.toMatch(/^The highlighted column answers the question/);
    for (const row of stored.result.interaction.additive) await page.getByTestId(`interaction-reference-${row.level}`).waitFor();
    // Our own plot controls, reachable from the keyboard; no plotly toolbar.
    const tools = page.getByTestId('plot-stratum-forest').getByRole('toolbar');
    await expect(tools.getByRole('button').allTextContents()).resolves.toEqual(['Download PNG', 'Download SVG', 'Reset view']);
    expect(await page.locator('.modebar-container .modebar').count()).toBe(0);
    await tools.getByRole('button', { name: 'Reset view' }).focus();
    await page.keyboard.press('Enter');
    await page.getByTestId('plot-stratum-forest').locator('.main-svg').first().waitFor();
    const [download] = await Promise.all([page.waitForEvent('download'), tools.getByRole('button', { name: 'Download SVG' }).click()]);
    expect(download.suggestedFilename()).toMatch(/^effect-of-call_back-by-age_band\.svg$/);
    await saveScreenshot(page, 'run-results');
    await page.setViewportSize({ width: 1366, height: 900 });
    await saveScreenshot(page, 'run-results-categorical-1366');
    await page.setViewportSize({ width: 390, height: 844 });
    await page.getByTestId('plot-stratum-forest').locator('.main-svg').first().waitFor();
    await saveScreenshot(page, 'run-results-categorical-390');
    expect(consoleErrors).toEqual([]);
    await context.close();
  });

  it('is readable, but not runnable, by the demo clinician', async () => {
    expect(runUrl).not.toBe('');
    const { page, context, consoleErrors } = await harness.newPage();
    await signInThroughPage(page, demoEmail('clinician'), DEMO_PASSWORD);
    await page.goto(runUrl);
    await page.getByTestId('plot-stratum-forest').locator('.main-svg').first().waitFor();
    await page.getByRole('link', { name: 'Call-back effect by age band' }).first().click();
    await page.getByTestId('runs-table').waitFor();
    await expect(page.getByRole('button', { name: /Run this analysis|Run again/ }).count()).resolves.toBe(0);
    await expect(page.getByRole('link', { name: 'Edit analysis' }).count()).resolves.toBe(0);
    await page.goto(runUrl);
    await page.getByTestId('plot-profile').locator('.main-svg').first().waitFor();
    await saveScreenshot(page, 'run-results-clinician');
    // The initiative's overview lists the run among the latest.
    await page.getByRole('navigation', { name: 'Initiative sections' }).getByRole('link', { name: 'Overview' }).click();
    await expect(page.getByTestId('recent-runs').textContent()).resolves.toContain('Call-back effect by age band');
    expect(consoleErrors).toEqual([]);
    await context.close();
  });
});

describe('the review of the age-band run', () => {
  it('is submitted by the analyst, commented on and signed off by the clinician, and shown on the board', async () => {
    expect(runUrl).not.toBe('');
    const analyst = await harness.newPage();
    await signInThroughPage(analyst.page, demoEmail('analyst'), DEMO_PASSWORD);
    await analyst.page.goto(runUrl);
    await analyst.page.getByTestId('plot-profile').locator('.main-svg').first().waitFor();
    await analyst.page.locator('#review-heading').scrollIntoViewIfNeeded();
    await waitForHydrated(analyst.page, 'review-panel');
    await analyst.page.getByLabel('Note for the reviewers (optional)').fill('Ready for a clinical read.');
    await analyst.page.getByRole('button', { name: 'Submit for review' }).click();
    await analyst.page.locator('[data-testid="review-panel"][data-state="submitted"]').waitFor();
    expect(analyst.consoleErrors).toEqual([]);
    await analyst.context.close();

    const clinician = await harness.newPage();
    await signInThroughPage(clinician.page, demoEmail('clinician'), DEMO_PASSWORD);
    await clinician.page.getByRole('navigation', { name: 'Initiatives' }).getByRole('link', { name: /Call-back within 72 hours/ }).click();
    await clinician.page.getByRole('navigation', { name: 'Initiative sections' }).getByRole('link', { name: 'Review board' }).click();
    await clinician.page.getByTestId('board-submitted').getByRole('link', { name: 'Call-back effect by age band' }).click();
    await clinician.page.getByTestId('plot-profile').locator('.main-svg').first().waitFor();
    await clinician.page.locator('#review-heading').scrollIntoViewIfNeeded();
    await waitForHydrated(clinician.page, 'review-panel');
    await clinician.page.getByLabel('Add a comment').fill('The 80+ estimate is the one the ward will ask about.');
    await clinician.page.getByRole('button', { name: 'Add comment' }).click();
    await clinician.page.getByTestId('comment-threads').getByText('The 80+ estimate is the one the ward will ask about.').waitFor();
    const page = clinician.page;
    await expect(page.getByTestId('review-state-top').textContent()).resolves.toBe('Submitted for review');
    // Sending back opens its own signed confirmation; without a note it is refused next to the field, and nothing is recorded.
    await page.getByRole('button', { name: 'Send back…' }).click();
    const sendBack = page.getByTestId('decision-form-send-back');
    await sendBack.getByLabel('Your password').fill(DEMO_PASSWORD);
    await sendBack.getByRole('button', { name: 'Sign and send back' }).click();
    await sendBack.getByText('Say what needs to change').waitFor();
    await expect(page.getByTestId('review-panel').getAttribute('data-state')).resolves.toBe('submitted');
    // Escape closes it and gives the focus back to the button that opened it.
    await page.keyboard.press('Escape');
    await expect(sendBack.count()).resolves.toBe(0);
    await expect(page.evaluate(() => document.activeElement?.textContent)).resolves.toBe('Send back…');
    // Signing off by keyboard: open the confirmation, choose a meaning, enter the password, sign.
    await page.getByRole('button', { name: 'Sign off…' }).focus();
    await page.keyboard.press('Enter');
    const signOff = page.getByTestId('decision-form-sign-off');
    await expect(page.evaluate(() => document.activeElement?.textContent)).resolves.toBe('Sign off this run');
    await signOff.getByLabel('reviewed, no objection').check();
    await signOff.getByLabel('Note to the analyst (optional)').fill('The age gradient matches what the ward sees.');
    await signOff.getByLabel('Your password').fill(DEMO_PASSWORD);
    await saveScreenshot(page, 'run-review-confirm');
    await signOff.getByLabel('Your password').press('Enter');
    await page.locator('[data-testid="review-panel"][data-state="signed-off"]').waitFor();
    // Every view of the state on the page follows, without a reload.
    await expect(page.getByTestId('review-state-top').textContent()).resolves.toBe('Signed off');
    const signature = await page.getByTestId('review-signature').last().textContent();
    expect(signature).toMatch(/^Signed by .+ at \d{4}-\d{2}-\d{2} \d{2}:\d{2} UTC, meaning “reviewed, no objection” · result [0-9a-f]{16}$/);
    await saveScreenshot(clinician.page, 'run-review');
    await clinician.page.goto(clinician.page.url().replace(/\/runs\/.*$/, '/'));
    await clinician.page.getByRole('navigation', { name: 'Initiatives' }).getByRole('link', { name: /Call-back within 72 hours/ }).click();
    await clinician.page.getByRole('navigation', { name: 'Initiative sections' }).getByRole('link', { name: 'Review board' }).click();
    await expect(clinician.page.getByTestId('board-signed-off').textContent()).resolves.toContain('Call-back effect by age band');
    await expect(clinician.page.getByTestId('board-signed-off').textContent()).resolves.toContain('meaning “reviewed, no objection”');
    await saveScreenshot(clinician.page, 'review-board');
    expect(clinician.consoleErrors).toEqual([]);
    await clinician.context.close();
  });
});

describe('an analysis with a continuous modifier', () => {
  it('leads with the effect curve, marks the named points and says where the effect is distinguishable from none', async () => {
    const { page, context, consoleErrors } = await harness.newPage();
    await signInThroughPage(page, demoEmail('analyst'), DEMO_PASSWORD);
    const me = await (await page.request.get('/api/me')).json();
    const upAndAbout = me.memberships.find((m: { initiativeName: string }) => m.initiativeName === 'Up-and-about');
    const extracts = await (await page.request.get(`/api/initiatives/${upAndAbout.initiativeId}/extracts`)).json();
    const extract = await (await page.request.get(`/api/extracts/${extracts[0].id}`)).json();
    const created = await page.request.post('/api/analyses', {
      data: {
        initiativeId: upAndAbout.initiativeId,
        extractVersionId: extract.versions[0].versionId,
        title: 'Early mobility by frailty',
        question: 'Does early mobility shorten stays less for frailer patients?',
        prespecified: false,
        spec: {
          outcome: { column: 'length_of_stay_days', type: 'continuous' },
          exposure: { column: 'early_mobility', reference: '0' },
          modifier: { column: 'frailty_score', type: 'continuous', slopesAt: { kind: 'values', values: [3, 5, 7], names: ['mild', 'moderate', 'severe'] } },
          covariates: [{ column: 'sex', type: 'categorical', reference: 'F' }, { column: 'comorbidity_score', type: 'continuous' }],
          model: 'linear',
          ci: { level: 0.95, method: 'delta' },
        },
      },
    });
    expect(created.status()).toBe(201);
    const { id } = await created.json();
    const started = await page.request.post(`/api/analyses/${id}/runs`, { data: {} });
    expect(started.status()).toBe(202);
    const { runId } = await started.json();
    await page.goto(`/runs/${runId}`);
    const curve = page.getByTestId('plot-effect-curve');
    await curve.locator('.main-svg').first().waitFor({ timeout: 60_000 });
    await expect(page.getByTestId('jn-sentence').first().textContent()).resolves.toMatch(/^The intervention's effect (is distinguishable from|cannot be told apart from) no effect .*frailty_score/);
    // The curve leads: it sits above the table of marked points, which names them as the analyst did.
    expect((await curve.boundingBox())!.y).toBeLessThan((await page.getByTestId('slopes-table').boundingBox())!.y);
    const named = (await page.getByTestId('slopes-table').locator('tbody th').allTextContents()).map((text) => text.trim().split(/\s+/)[0]);
    expect(named).toEqual(['mild', 'moderate', 'severe']);
    await expect(curve.locator('.textpoint').allTextContents()).resolves.toEqual(['mild', 'moderate', 'severe']);
    await expect(page.getByTestId('interaction-heading').textContent()).resolves.toBe('Does the effect differ? The difference in mean differences');
    await expect(page.getByTestId('exploratory-label').textContent()).resolves.toContain('Exploratory');
    await expect(page.getByTestId('result-cautions').count()).resolves.toBeGreaterThan(0);
    await saveScreenshot(page, 'run-results-continuous');
    await page.setViewportSize({ width: 1366, height: 900 });
    await saveScreenshot(page, 'run-results-continuous-1366');
    await page.setViewportSize({ width: 390, height: 844 });
    await curve.locator('.main-svg').first().waitFor();
    await saveScreenshot(page, 'run-results-continuous-390');
    expect(consoleErrors).toEqual([]);
    await context.close();
  });
});

describe('the demo auditor', () => {
  it('verifies the audit trail from the initiative overview', async () => {
    const { page, context, consoleErrors } = await harness.newPage();
    await signInThroughPage(page, demoEmail('auditor'), DEMO_PASSWORD);
    await page.getByRole('navigation', { name: 'Initiatives' }).getByRole('link', { name: /Call-back within 72 hours/ }).click();
    await waitForHydrated(page, 'chain-check');
    await page.getByRole('button', { name: 'Verify the audit trail' }).click();
    await page.getByTestId('chain-report').waitFor();
    await expect(page.getByTestId('chain-report').textContent()).resolves.toMatch(/^Intact: all [\d,]+ events in Crossgrain’s trail link up/);

    // Save a checkpoint as a file, then check the trail against it: it holds.
    const [download] = await Promise.all([page.waitForEvent('download'), page.getByTestId('checkpoint-download').click()]);
    expect(download.suggestedFilename()).toMatch(/^crossgrain-audit-checkpoint-\d+\.json$/);
    const saved = path.join(os.tmpdir(), `checkpoint-${Date.now()}.json`);
    await download.saveAs(saved);
    const checkpoint = JSON.parse(readFileSync(saved, 'utf8'));
    expect(checkpoint.format).toBe('crossgrain-audit-checkpoint/1');
    await page.getByTestId('checkpoint-file').setInputFiles(saved);
    await page.locator('[data-testid="checkpoint-finding"][data-holds="true"]').waitFor();
    await expect(page.getByTestId('checkpoint-finding').textContent()).resolves.toContain(`position ${checkpoint.position} still has the checkpoint's hash`);
    await saveScreenshot(page, 'auditor-overview');

    // A file that is not a checkpoint is refused with a message, and nothing is checked.
    const notCheckpoint = path.join(os.tmpdir(), `not-a-checkpoint-${Date.now()}.json`);
    writeFileSync(notCheckpoint, '{"format":"something-else"}');
    await page.getByTestId('checkpoint-file').setInputFiles(notCheckpoint);
    await expect(page.getByRole('alert').first().textContent()).resolves.toContain('is not a Crossgrain audit checkpoint');
    await expect(page.getByTestId('chain-report').count()).resolves.toBe(0);
    expect(consoleErrors).toEqual([]);
    await context.close();
  });

  it('re-runs the age-band run to verify it, and reads that it reproduced bit for bit', async () => {
    expect(runUrl).not.toBe('');
    const { page, context, consoleErrors } = await harness.newPage();
    await signInThroughPage(page, demoEmail('auditor'), DEMO_PASSWORD);
    await page.goto(runUrl);
    await page.getByTestId('verify-run').click();
    await page.waitForURL((url) => url.pathname.startsWith('/runs/') && url.toString() !== runUrl);
    await page.getByTestId('verification-sentence').waitFor({ timeout: 60_000 });
    await expect(page.getByTestId('verification-sentence').getAttribute('data-reproduced')).resolves.toBe('true');
    await expect(page.getByTestId('verification-sentence').textContent()).resolves.toMatch(/^Reproduced bit for bit/);
    await saveScreenshot(page, 'run-verified');
    await page.goto(runUrl);
    await expect(page.getByTestId('verifications').textContent()).resolves.toContain('reproduced bit for bit');
    expect(consoleErrors).toEqual([]);
    await context.close();
  });

  it('reads the audit trail, filters it to runs, and exports what it shows', async () => {
    const { page, context, consoleErrors } = await harness.newPage();
    await signInThroughPage(page, demoEmail('auditor'), DEMO_PASSWORD);
    await page.getByRole('navigation', { name: 'Initiatives' }).getByRole('link', { name: /Call-back within 72 hours/ }).click();
    await page.getByRole('navigation', { name: 'Initiative sections' }).getByRole('link', { name: 'Audit trail' }).click();
    await page.getByTestId('audit-table').waitFor();
    await page.getByLabel('Area').selectOption('run');
    await page.getByRole('button', { name: 'Apply filter' }).click();
    await page.waitForURL(/action=run/);
    const actions = await page.getByTestId('audit-table').locator('tbody td:nth-child(4)').allTextContents();
    expect(actions.length).toBeGreaterThan(0);
    expect(actions.every((action) => action.startsWith('run.'))).toBe(true);
    expect(actions).toContain('run.finished');
    await saveScreenshot(page, 'audit-trail');

    const [download] = await Promise.all([page.waitForEvent('download'), page.getByTestId('audit-export-csv').click()]);
    const saved = path.join(os.tmpdir(), `audit-${Date.now()}.csv`);
    await download.saveAs(saved);
    const text = readFileSync(saved, 'utf8');
    expect(text.startsWith('Caution,')).toBe(true);
    expect(text).toContain('Filter,action run');
    expect(consoleErrors).toEqual([]);
    await context.close();
  });
});
