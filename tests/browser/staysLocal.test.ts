/**
 * Nothing of a page leaves the machine: every request the main pages make (results with
 * their plots, initiative overview, review board, audit trail, extract) goes to loopback,
 * and the plots' toolbar offers no share button, no hosted editor and no logo link.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { executeRun } from '@/features/runs/executeRun';
import { hashPassword } from '@/lib/server/passwords';
import { addMember, closeOwnerDb, makeUser } from '../support/factories';
import { createAnalysis, makeWorld, queueRun, signedInAnalyst, WORLD_PASSWORD, type World } from '../support/runWorld';
import { signInThroughPage, startHarness, type Harness } from './harness';

let harness: Harness;
let world: World;
let runId: string;
let auditorEmail: string;

beforeAll(async () => {
  harness = await startHarness();
  world = await makeWorld('Loopback ward');
  const client = await signedInAnalyst(world);
  runId = await queueRun(client, await createAnalysis(client, world));
  expect(await executeRun(runId, world.analyst.id, { threads: 0 })).toBe('succeeded');
  const auditor = await makeUser({ passwordHash: await hashPassword(WORLD_PASSWORD) });
  await addMember(world.initiativeId, auditor.id, 'auditor');
  auditorEmail = auditor.email;
});

afterAll(async () => {
  await harness?.close();
  await closeOwnerDb();
});

const LOOPBACK = new Set(['127.0.0.1', 'localhost', '[::1]']);

describe('the main pages', () => {
  it('request only loopback addresses, and the plots offer nothing that sends a chart away', async () => {
    const { page } = await harness.newPage();
    const auditorView = await harness.newPage();
    const requested: string[] = [];
    page.on('request', (request) => requested.push(request.url()));
    auditorView.page.on('request', (request) => requested.push(request.url()));
    await signInThroughPage(page, world.analyst.email, WORLD_PASSWORD);

    await page.goto(`/runs/${runId}`);
    await page.getByTestId('plot-stratum-forest').locator('.main-svg').first().waitFor();
    await page.getByTestId('plot-profile').locator('.main-svg').first().waitFor();
    const plots = page.locator('.js-plotly-plot');
    expect(await plots.count()).toBeGreaterThan(0);
    // Our own plot controls (image export, reset) are there; plotly's toolbar is not, and nothing offers to share.
    expect(await page.getByRole('button', { name: 'Download PNG' }).count()).toBeGreaterThan(0);
    expect(await page.locator('.modebar-btn').count()).toBe(0);
    expect(await page.getByRole('button', { name: /share|cloud|chart studio|publish/i }).count()).toBe(0);
    // Saving an image stays in the browser: a download, and no request leaves the machine (checked below).
    await Promise.all([page.waitForEvent('download'), page.getByRole('button', { name: 'Download PNG' }).first().click()]);
    for (const selector of ['[data-attr="sendChartToCloud"]', '.modebar-btn[data-title*="Share"]', '.modebar-btn[data-title*="Chart Studio"]', '.modebar-btn[data-title*="cloud" i]', 'a.modebar-btn[href]', '.modebar .plotlyjsicon']) {
      expect(await page.locator(selector).count(), selector).toBe(0);
    }
    const outsideLinks = await page.locator('a[href^="http"]').evaluateAll((links) =>
      links.map((link) => (link as HTMLAnchorElement).href).filter((href) => !/^https?:\/\/(127\.0\.0\.1|localhost)(:\d+)?\//.test(href)),
    );
    expect(outsideLinks).toEqual([]);

    for (const path of [`/initiatives/${world.initiativeId}`, `/initiatives/${world.initiativeId}/board`, `/extracts/${world.extractId}`]) {
      const response = await page.goto(path);
      expect(response?.status(), path).toBe(200);
      await page.waitForLoadState('networkidle');
    }
    // The audit trail is the auditor's page.
    await signInThroughPage(auditorView.page, auditorEmail, WORLD_PASSWORD);
    const audit = await auditorView.page.goto(`/initiatives/${world.initiativeId}/audit`);
    expect(audit?.status()).toBe(200);
    await auditorView.page.waitForLoadState('networkidle');

    expect(requested.length).toBeGreaterThan(10);
    const outside = requested.filter((url) => {
      const parsed = new URL(url);
      if (parsed.protocol === 'data:' || parsed.protocol === 'blob:') return false;
      return !LOOPBACK.has(parsed.hostname);
    });
    expect(outside).toEqual([]);
  });
});
