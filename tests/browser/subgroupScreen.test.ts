/**
 * A subgroup screen in a real browser, on the synthetic demo data: the demo analyst
 * chooses "Subgroup screen" in the analysis form, lists three candidate modifiers, sees one
 * model equation per modifier, saves and runs it, and reads the screen: the sentence
 * counting the modifiers, the exploratory standing, the forest plot grouped by modifier with
 * Crossgrain's own controls, a table per modifier with numbers equal to the stored result,
 * and a link that opens the form pre-filled for a full analysis of one modifier.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { seedDemo } from '../../db/seed';
import { seedDemoExtracts } from '../../db/seeds/demoExtracts';
import { DEMO_PASSWORD, demoEmail } from '../../db/seeds/demo';
import { signInThroughPage, startHarness, startWorker, waitForHydrated, type Harness } from './harness';
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

interface StoredScreen {
  status: string;
  result: { screen: { examined: number; modifiers: { column: string; interaction: { p: number }; pAdjusted: { holm: number; bh: number } }[] } };
}

describe('a subgroup screen', () => {
  it('is listed in the form, run, and read as one forest plot and a table per modifier', async () => {
    const { page, consoleErrors } = await harness.newPage();
    await signInThroughPage(page, demoEmail('analyst'), DEMO_PASSWORD);
    await page.getByRole('navigation', { name: 'Initiatives' }).getByRole('link', { name: /Call-back within 72 hours/ }).click();
    await page.getByRole('navigation', { name: 'Initiative sections' }).getByRole('link', { name: 'Analyses' }).click();
    await page.getByRole('link', { name: 'New analysis' }).click();
    const form = page.getByTestId('analysis-form');
    const chooser = page.getByRole('link', { name: /Discharges with call-back status \(synthetic\)/ });
    await form.or(chooser).first().waitFor();
    if (await chooser.count()) await chooser.click();
    await waitForHydrated(page, 'analysis-form');
    await page.getByLabel('Title', { exact: true }).fill('Screen of candidate modifiers');
    await page.getByLabel('Question', { exact: true }).fill('Across which patient groups might the call-back effect differ?');
    await page.getByLabel('Outcome', { exact: true }).selectOption('readmitted_30d');
    await page.getByLabel('Intervention', { exact: true }).selectOption('call_back');
    await page.getByRole('radio', { name: /Subgroup screen/ }).check();
    await page.getByTestId('screen-add-modifier').click();
    await page.getByLabel('Modifier 1', { exact: true }).selectOption('age_band');
    await page.getByLabel('Modifier 2', { exact: true }).selectOption('sex');
    await page.getByLabel('Modifier 3', { exact: true }).selectOption('comorbidity_score');
    await form.getByRole('checkbox', { name: /^prior_admissions/ }).check();
    const equations = page.getByTestId('screen-equations');
    // One equation per modifier, each headed by its column.
    await expect(equations.locator('[data-testid="screen-equation"] > p.text-xs').allTextContents()).resolves.toEqual(['age_band', 'sex', 'comorbidity_score']);
    await expect(equations.locator('[data-testid="screen-equation"] [role="math"]').count()).resolves.toBe(3);
    await expect(page.getByTestId('computation-summary').textContent()).resolves.toContain('Subgroup screen over 3 modifiers');
    await page.getByTestId('analysis-submit').click();
    await page.waitForURL(/\/analyses\/[0-9a-f-]{36}$/);

    await page.getByRole('button', { name: 'Run this analysis' }).click();
    await page.getByTestId('run-finished').waitFor({ timeout: 90_000 });
    await page.getByRole('link', { name: 'Read the results' }).click();
    await page.waitForURL(/\/runs\/[0-9a-f-]{36}$/);
    await page.getByTestId('result-cautions').waitFor();
    const screen = page.getByTestId('subgroup-screen');
    await expect(screen.getByTestId('screen-sentence').textContent()).resolves.toMatch(/^Three modifiers were examined; /);
    await expect(screen.getByTestId('screen-standing').getAttribute('data-exploratory')).resolves.toBe('true');
    await page.getByTestId('plot-screen-forest').locator('.main-svg').first().waitFor();
    const tools = page.getByTestId('plot-screen-forest').getByRole('toolbar');
    await expect(tools.getByRole('button').allTextContents()).resolves.toEqual(['Download PNG', 'Download SVG', 'Reset view']);
    expect(await page.locator('.modebar-container .modebar').count()).toBe(0);

    const runId = page.url().split('/').pop()!;
    const stored = (await (await page.request.get(`/api/runs/${runId}`)).json()) as StoredScreen;
    expect(stored.result.screen.examined).toBe(3);
    for (const entry of stored.result.screen.modifiers) {
      const block = page.locator(`[data-testid="screen-modifier"][data-column="${entry.column}"]`);
      expect(Number(await block.locator('[data-p]').getAttribute('data-p'))).toBe(entry.interaction.p);
      expect(Number(await block.locator('[data-p-holm]').getAttribute('data-p-holm'))).toBe(entry.pAdjusted.holm);
      expect(Number(await block.locator('[data-p-bh]').getAttribute('data-p-bh'))).toBe(entry.pAdjusted.bh);
    }

    await page.locator('[data-testid="screen-modifier"][data-column="sex"]').getByTestId('screen-full-analysis').click();
    await page.getByTestId('prefilled-from-screen').waitFor();
    await waitForHydrated(page, 'analysis-form');
    await expect(page.getByLabel('Modifier', { exact: true }).inputValue()).resolves.toBe('sex');
    await expect(page.getByLabel('Outcome', { exact: true }).inputValue()).resolves.toBe('readmitted_30d');
    expect(consoleErrors).toEqual([]);
  });
});
