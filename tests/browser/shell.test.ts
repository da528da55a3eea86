/** The app shell in a real browser: layout, font, caution, no console errors. */
import { existsSync } from 'node:fs';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { saveScreenshot, startHarness, type Harness } from './harness';

let harness: Harness;

beforeAll(async () => {
  harness = await startHarness();
});

afterAll(async () => {
  await harness?.close();
});

describe('the home page', () => {
  it('renders the app shell in Noto Sans with the standing caution and no console errors', async () => {
    const { page, consoleErrors, context } = await harness.newPage();
    const response = await page.goto('/');
    expect(response?.status()).toBe(200);
    await expect(page.locator('header').getByText('Crossgrain', { exact: true }).isVisible()).resolves.toBe(true);
    await expect(page.getByRole('navigation', { name: 'Initiatives' }).isVisible()).resolves.toBe(true);
    const caution = await page.getByTestId('standing-caution').textContent();
    expect(caution).toContain('Not clinical guidance');

    // The computed font stack starts with Noto Sans, and the browser actually loaded it
    // from our own origin (document.fonts reports only faces that were fetched).
    const family = await page.evaluate(() => getComputedStyle(document.body).fontFamily);
    expect(family.split(',')[0].replace(/["']/g, '').trim()).toBe('Noto Sans');
    await page.evaluate(() => document.fonts.ready);
    const loaded = await page.evaluate(() =>
      [...document.fonts].filter((f) => f.status === 'loaded').map((f) => f.family.replace(/["']/g, '')),
    );
    expect(loaded).toContain('Noto Sans');

    const headers = response?.headers() ?? {};
    expect(headers['content-security-policy']).toContain("object-src 'none'");
    expect(headers['x-content-type-options']).toBe('nosniff');

    const file = await saveScreenshot(page, 'home-signed-out');
    expect(existsSync(file)).toBe(true);
    expect(consoleErrors).toEqual([]);
    await context.close();
  });

  it('answers the health check with the version and the database state', async () => {
    const { page, context } = await harness.newPage();
    const response = await page.request.get('/api/health');
    expect(response.status()).toBe(200);
    const body = await response.json();
    expect(body).toMatchObject({ status: 'ok', database: 'up' });
    expect(body.version).toMatch(/^\d+\.\d+\.\d+/);
    await context.close();
  });
});
