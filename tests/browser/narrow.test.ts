/**
 * Every main page at 390 × 844 (a phone held upright): nothing overflows the page sideways
 * (document.documentElement.scrollWidth ≤ clientWidth; tables scroll inside their card),
 * the navigation folds into the header's menu, and the audit trail at 1366 px keeps its
 * table inside its card. Screenshots of each page are saved under .test-artifacts.
 */
import type { Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { QueryTypes } from 'sequelize';
import { seedDemo } from '../../db/seed';
import { seedDemoExtracts } from '../../db/seeds/demoExtracts';
import { DEMO_PASSWORD, demoEmail } from '../../db/seeds/demo';
import { CALL_BACK_DEMO_SPEC } from '@/features/analyses/demoSpecs';
import { createAnalysis } from '@/features/analyses/analyses.server';
import { executeRun } from '@/features/runs/executeRun';
import { startRun } from '@/features/runs/runs.server';
import { withIdentity } from '@/lib/server/db';
import { saveScreenshot, signInThroughPage, startHarness, type Harness } from './harness';
import { closeOwnerDb, ownerDb } from '../support/factories';

let harness: Harness;
let initiativeId: string;
let extractId: string;
let runId: string;
let analysisId: string;

beforeAll(async () => {
  await seedDemo(ownerDb());
  await seedDemoExtracts();
  harness = await startHarness();
  const [demo] = await ownerDb().query<{ initiative_id: string; extract_id: string; version_id: string; analyst_id: string }>(
    `SELECT i.id AS initiative_id, e.id AS extract_id, v.id AS version_id, u.id AS analyst_id
       FROM initiatives i JOIN extracts e ON e.initiative_id = i.id JOIN extract_versions v ON v.extract_id = e.id AND v.status = 'ready'
       JOIN users u ON u.email = :email
      WHERE i.slug = 'call-back-72h' ORDER BY v.version_number LIMIT 1`,
    { replacements: { email: demoEmail('analyst') }, type: QueryTypes.SELECT },
  );
  initiativeId = demo.initiative_id;
  extractId = demo.extract_id;
  const actor = { id: demo.analyst_id, clientAddress: 'test' };
  ({ id: analysisId } = await withIdentity(actor.id, (t) =>
    createAnalysis(t, actor, {
      initiativeId, extractVersionId: demo.version_id, title: 'Narrow screen check of the call-back by age band, with a long title that must wrap',
      question: 'Does the call-back help older patients more?', prespecified: false, spec: { ...CALL_BACK_DEMO_SPEC, covariates: [] },
    }),
  ));
  ({ runId } = await withIdentity(actor.id, (t) => startRun(t, actor, analysisId)));
  expect(await executeRun(runId, actor.id, { threads: 0 })).toBe('succeeded');
}, 120_000);

afterAll(async () => {
  await harness?.close();
  await closeOwnerDb();
});

/** How far the page reaches past the window sideways, in CSS pixels (0 when it fits). */
const overflow = (page: Page) => page.evaluate(() => document.documentElement.scrollWidth - document.documentElement.clientWidth);

/** The outermost elements reaching past the window's right edge, named for the failure message. */
const widest = (page: Page) =>
  page.evaluate(() => {
    const limit = document.documentElement.clientWidth;
    const clipped = (el: Element) => {
      for (let up = el.parentElement; up && up !== document.body; up = up.parentElement) if (getComputedStyle(up).overflowX !== 'visible') return true;
      return false;
    };
    const past = [...document.querySelectorAll('body *')].filter((el) => el.getBoundingClientRect().right > limit + 0.5 && !clipped(el));
    const outermost = past.filter((el) => !past.includes(el.parentElement!));
    return outermost.slice(0, 4).map((el) => `${el.tagName.toLowerCase()}.${[...el.classList].slice(0, 4).join('.')} (${Math.round(el.getBoundingClientRect().right)}px)`);
  });

async function narrowPage(email: string): Promise<{ page: Page; close: () => Promise<void> }> {
  const { page, context } = await harness.newPage();
  await page.setViewportSize({ width: 390, height: 844 });
  await signInThroughPage(page, email, DEMO_PASSWORD);
  return { page, close: () => context.close() };
}

async function visitAll(page: Page, paths: [string, string][]): Promise<string[]> {
  const wide: string[] = [];
  for (const [name, path] of paths) {
    const response = await page.goto(path);
    expect(response?.status(), path).toBe(200);
    if (path === `/runs/${runId}`) {
      // The plot fills the card's width and lays its legend under the plot.
      const plot = page.getByTestId('plot-stratum-forest');
      await plot.locator('.main-svg').first().waitFor();
      await plot.scrollIntoViewIfNeeded();
      await plot.screenshot({ path: await saveScreenshot(page, 'narrow-results-page').then((file) => file.replace('-page.png', '-plot.png')) });
      const [svgWidth, cardWidth] = await plot.evaluate((el) => [el.querySelector('.main-svg')!.getBoundingClientRect().width, el.getBoundingClientRect().width]);
      expect(svgWidth).toBeLessThanOrEqual(cardWidth);
      expect(svgWidth).toBeGreaterThan(cardWidth * 0.8);
    }
    await page.waitForLoadState('networkidle');
    await saveScreenshot(page, `narrow-${name}`);
    const by = await overflow(page);
    if (by > 0) wide.push(`${path} is ${by}px too wide: ${(await widest(page)).join(' | ')}`);
  }
  return wide;
}

describe('at 390 × 844', () => {
  it('the analyst’s pages fit the width, and the navigation is a menu in the header', async () => {
    const { page, close } = await narrowPage(demoEmail('analyst'));
    expect(await page.getByRole('navigation', { name: 'Initiatives' }).isVisible()).toBe(false);
    const menu = page.getByTestId('shell-menu');
    const toggle = menu.locator('summary');
    expect(await menu.getAttribute('open')).toBeNull();
    await toggle.click();
    expect(await menu.getAttribute('open')).not.toBeNull();
    await expect(page.getByRole('navigation', { name: 'Menu' }).getByRole('link', { name: /Call-back/i }).first().isVisible()).resolves.toBe(true);
    await saveScreenshot(page, 'narrow-menu-open');
    // The user's name and the logo do not overlap.
    const logo = await page.locator('header a[href="/"]').boundingBox();
    const name = await page.getByTestId('signed-in-user').boundingBox();
    expect(logo && name && logo.x + logo.width <= name.x).toBe(true);

    const wide = await visitAll(page, [
      ['home', '/'], ['overview', `/initiatives/${initiativeId}`], ['extracts', `/initiatives/${initiativeId}/extracts`], ['extract', `/extracts/${extractId}`],
      ['analyses', `/initiatives/${initiativeId}/analyses`], ['analysis', `/analyses/${analysisId}`], ['new-analysis', `/initiatives/${initiativeId}/analyses/new`],
      ['results', `/runs/${runId}`], ['board', `/initiatives/${initiativeId}/board`], ['briefs', `/initiatives/${initiativeId}/briefs`], ['all-briefs', '/briefs'],
      ['profile', '/profile'],
    ]);
    expect(wide).toEqual([]);
    await close();
  }, 120_000);

  it('the audit trail and the administration pages fit the width', async () => {
    const auditor = await narrowPage(demoEmail('auditor'));
    expect(await visitAll(auditor.page, [['audit', `/initiatives/${initiativeId}/audit`]])).toEqual([]);
    await auditor.close();
    const admin = await narrowPage(demoEmail('admin'));
    expect(await visitAll(admin.page, [['admin', '/admin'], ['people', '/admin/users'], ['initiatives', '/admin/initiatives'], ['account-events', '/admin/audit']])).toEqual([]);
    await admin.close();
  }, 120_000);
});

describe('the audit trail at 1366 px', () => {
  it('keeps the table inside its card, with short hashes that open whole', async () => {
    const { page, context } = await harness.newPage();
    await page.setViewportSize({ width: 1366, height: 900 });
    await signInThroughPage(page, demoEmail('auditor'), DEMO_PASSWORD);
    await page.goto(`/initiatives/${initiativeId}/audit`);
    await saveScreenshot(page, 'wide-audit-trail');
    expect(await overflow(page)).toBe(0);
    const card = page.getByTestId('audit-table-card');
    const fits = await card.evaluate((el) => el.scrollWidth <= el.clientWidth);
    expect(fits).toBe(true);
    await expect(page.getByTestId('audit-numbering').textContent()).resolves.toContain('Numbers missing here belong to other initiatives’ events or account events');
    const hash = page.getByTestId('audit-hash').first();
    await hash.locator('summary').click();
    await expect(hash.locator('code').textContent()).resolves.toMatch(/^[0-9a-f]{64}$/);
    // Names keep to one or two lines: the Who cell of the first row is at most three lines tall.
    const who = await page.getByTestId('audit-who').first().evaluate((el) => el.getBoundingClientRect().height / parseFloat(getComputedStyle(el).lineHeight));
    expect(who).toBeLessThan(4);
    await context.close();
  }, 60_000);
});
