/**
 * One run per click and a runs table that keeps up: the demo analyst double-clicks Run on
 * a new analysis and one run is queued; the runs table shows it, and then shows it
 * finished, without a reload; two runs are then compared, with the overlaid forest plot.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { QueryTypes } from 'sequelize';
import { seedDemo } from '../../db/seed';
import { seedDemoExtracts } from '../../db/seeds/demoExtracts';
import { DEMO_PASSWORD, demoEmail } from '../../db/seeds/demo';
import { CALL_BACK_DEMO_SPEC } from '@/features/analyses/demoSpecs';
import { saveScreenshot, signInThroughPage, startHarness, startWorker, waitForHydrated, type Harness } from './harness';
import { closeOwnerDb, ownerDb } from '../support/factories';

let harness: Harness;
let worker: ReturnType<typeof startWorker>;

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

describe('the Run button and the runs table', () => {
  it('queues one run on a double-click, and the table shows it finished without a reload', async () => {
    const { page, consoleErrors } = await harness.newPage();
    await signInThroughPage(page, demoEmail('analyst'), DEMO_PASSWORD);
    const [version] = await ownerDb().query<{ id: string; initiative_id: string }>(
      `SELECT v.id, e.initiative_id FROM extract_versions v JOIN extracts e ON e.id = v.extract_id
        WHERE e.name LIKE 'Discharges with call-back%' AND v.status = 'ready' ORDER BY v.uploaded_at DESC LIMIT 1`,
      { type: QueryTypes.SELECT },
    );
    const analysisId = await page.evaluate(async (body) => {
      const response = await fetch('/api/analyses', { method: 'POST', headers: { 'Content-Type': 'application/json' }, body: JSON.stringify(body) });
      return ((await response.json()) as { id: string }).id;
    }, { initiativeId: version.initiative_id, extractVersionId: version.id, title: 'One run per click', question: 'Does a double-click queue one run?', prespecified: false, spec: CALL_BACK_DEMO_SPEC });
    expect(analysisId).toMatch(/^[0-9a-f-]{36}$/);

    await page.goto(`/analyses/${analysisId}`);
    await waitForHydrated(page, 'run-watcher');
    const history = page.locator('[data-runs-history]');
    await expect(history.textContent()).resolves.toContain('No runs yet');
    await page.getByTestId('run-button').dblclick();
    await page.getByTestId('run-finished').waitFor({ timeout: 60_000 });
    // The table below followed the panel: one run, finished, with no reload.
    const rows = page.getByTestId('runs-table').locator('tbody tr');
    await expect.poll(async () => (await rows.count()) === 1 && /finished|succeeded/i.test((await rows.first().textContent()) ?? ''), { timeout: 10_000 }).toBe(true);
    await expect(history.textContent()).resolves.not.toContain('No runs yet');
    const count = await ownerDb().query<{ n: string }>('SELECT count(*) AS n FROM runs WHERE analysis_id = :id', { replacements: { id: analysisId }, type: QueryTypes.SELECT });
    expect(Number(count[0].n)).toBe(1);
    await saveScreenshot(page, 'runs-table-after-run');

    // A second run (a new intent: a new key) is queued and shown too; then the two are compared.
    await page.getByRole('button', { name: 'Run again' }).click();
    await expect.poll(async () => rows.count(), { timeout: 10_000 }).toBe(2);
    await page.getByTestId('run-finished').waitFor({ timeout: 60_000 });
    await expect.poll(async () => (await rows.allTextContents()).filter((text) => /queued|running/i.test(text)).length, { timeout: 10_000 }).toBe(0);
    await page.getByRole('button', { name: 'Compare the chosen runs' }).click();
    await page.waitForURL(/\/runs\/compare\?/);
    await page.getByTestId('plot-comparison-forest').locator('.main-svg').first().waitFor();
    await expect(page.getByTestId('estimate-moves').textContent()).resolves.toContain('RERI');
    await saveScreenshot(page, 'runs-compared');
    expect(consoleErrors).toEqual([]);
  });
});
