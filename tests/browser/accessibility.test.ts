/**
 * Accessibility of the main screens, checked in a real browser with axe-core (Deque's
 * open-source rules engine) against WCAG 2.1 levels A and AA: sign-in, the initiative
 * overview, extracts, an extract, analyses, the analysis form, a results page, a run
 * comparison, the audit trail, the profile and the administration pages. A serious or critical violation fails the test and is
 * named with the elements it was found on. Keyboard use of the analysis form is checked
 * separately: every control is reachable with Tab and shows a visible focus ring.
 */
import { readFileSync } from 'node:fs';
import { createRequire } from 'node:module';
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
import { signInThroughPage, startHarness, waitForHydrated, type Harness } from './harness';
import { closeOwnerDb, ownerDb } from '../support/factories';

const axeSource = readFileSync(createRequire(import.meta.url).resolve('axe-core/axe.min.js'), 'utf8');
let harness: Harness;
let initiativeId: string;
let extractId: string;
let runId: string;
let analysisId: string;

interface Violation {
  id: string;
  impact: string | null;
  help: string;
  nodes: { target: string[] }[];
}

/** Runs axe in the page (evaluate is not subject to the page's CSP) and keeps the serious ones. */
async function seriousViolations(page: Page): Promise<string[]> {
  const violations = await page.evaluate(
    async (source) => {
      // eslint-disable-next-line no-eval
      (0, eval)(source);
      const axe = (window as unknown as { axe: { run: (context: Document, options: object) => Promise<{ violations: Violation[] }> } }).axe;
      const result = await axe.run(document, { runOnly: { type: 'tag', values: ['wcag2a', 'wcag2aa', 'wcag21a', 'wcag21aa'] } });
      return result.violations;
    },
    axeSource,
  );
  return violations
    .filter((v) => v.impact === 'serious' || v.impact === 'critical')
    .map((v) => `${v.id} (${v.impact}): ${v.help} — ${v.nodes.slice(0, 5).map((n) => n.target.join(' ')).join('; ')}`);
}

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
      initiativeId, extractVersionId: demo.version_id, title: 'Accessibility check by age band', question: 'Does the call-back help older patients more?',
      prespecified: false,
      spec: { ...CALL_BACK_DEMO_SPEC, covariates: [] },
    }),
  ));
  ({ runId } = await withIdentity(actor.id, (t) => startRun(t, actor, analysisId)));
  expect(await executeRun(runId, actor.id, { threads: 0 })).toBe('succeeded');
});

afterAll(async () => {
  await harness?.close();
  await closeOwnerDb();
});

describe('WCAG 2.1 A and AA (axe-core), serious and critical rules', () => {
  it('the sign-in page', async () => {
    const { page, context } = await harness.newPage();
    await page.goto('/sign-in');
    expect(await seriousViolations(page)).toEqual([]);
    await context.close();
  });

  it('the analyst’s screens', async () => {
    const { page, context } = await harness.newPage();
    await signInThroughPage(page, demoEmail('analyst'), DEMO_PASSWORD);
    for (const path of [
      '/', `/initiatives/${initiativeId}`, `/initiatives/${initiativeId}/extracts`, `/extracts/${extractId}`,
      `/initiatives/${initiativeId}/analyses`, `/initiatives/${initiativeId}/board`, `/initiatives/${initiativeId}/briefs`, '/briefs', `/analyses/${analysisId}`, `/runs/${runId}`, `/runs/compare?a=${runId}&b=${runId}`, '/profile',
    ]) {
      await page.goto(path);
      if (path === `/runs/${runId}`) await page.getByTestId('plot-stratum-forest').locator('.main-svg').first().waitFor();
      expect(await seriousViolations(page), path).toEqual([]);
    }
    await page.goto(`/initiatives/${initiativeId}/analyses/new`);
    const chooser = page.getByRole('link', { name: /Discharges with call-back status \(synthetic\)/ });
    await page.getByTestId('analysis-form').or(chooser).first().waitFor();
    if (await chooser.count()) await chooser.click();
    await waitForHydrated(page, 'analysis-form');
    expect(await seriousViolations(page), 'new analysis').toEqual([]);
    await context.close();
  });

  it('the auditor’s trail and the administration pages', async () => {
    const auditor = await harness.newPage();
    await signInThroughPage(auditor.page, demoEmail('auditor'), DEMO_PASSWORD);
    await auditor.page.goto(`/initiatives/${initiativeId}/audit`);
    expect(await seriousViolations(auditor.page), 'audit trail').toEqual([]);
    await auditor.context.close();
    const admin = await harness.newPage();
    await signInThroughPage(admin.page, demoEmail('admin'), DEMO_PASSWORD);
    await admin.page.goto('/admin/users');
    await admin.page.getByRole('table').first().waitFor();
    expect(await seriousViolations(admin.page), 'people').toEqual([]);
    for (const path of ['/admin/initiatives', '/admin/outbox', '/admin/audit']) {
      await admin.page.goto(path);
      expect(await seriousViolations(admin.page), path).toEqual([]);
    }
    await admin.context.close();
  });
});

describe('keyboard use of the analysis form', () => {
  it('reaches every control with Tab, each with a visible focus indicator', async () => {
    const { page, context } = await harness.newPage();
    await signInThroughPage(page, demoEmail('analyst'), DEMO_PASSWORD);
    await page.goto(`/initiatives/${initiativeId}/analyses/new`);
    const chooser = page.getByRole('link', { name: /Discharges with call-back status \(synthetic\)/ });
    await page.getByTestId('analysis-form').or(chooser).first().waitFor();
    if (await chooser.count()) await chooser.click();
    await waitForHydrated(page, 'analysis-form');
    const controls = await page.getByTestId('analysis-form').locator('input:not([type=hidden]):not(.sr-only):enabled, select:enabled, textarea:enabled, button:enabled').count();
    await page.getByLabel('Title', { exact: true }).focus();
    const reached = new Set<string>();
    const unmarked: string[] = [];
    for (let i = 0; i < controls + 5; i += 1) {
      const focused = await page.evaluate(() => {
        const el = document.activeElement as HTMLElement | null;
        if (!el || !el.closest('[data-testid="analysis-form"]')) return null;
        const style = getComputedStyle(el);
        const ringed = (style.outlineStyle !== 'none' && parseFloat(style.outlineWidth) > 0) || style.boxShadow !== 'none';
        const form = el.closest('[data-testid="analysis-form"]')!;
        const index = [...form.querySelectorAll('input, select, textarea, button')].indexOf(el);
        const label = el.id || el.getAttribute('aria-label') || el.closest('label')?.textContent?.trim().slice(0, 30) || el.textContent?.trim().slice(0, 30) || el.tagName;
        return { key: `${index}:${label}`, label, ringed };
      });
      if (focused) {
        reached.add(focused.key);
        if (!focused.ringed) unmarked.push(focused.label);
      }
      await page.keyboard.press('Tab');
    }
    // A group of radio buttons is one Tab stop (arrow keys move within it).
    const radios = await page.getByTestId('analysis-form').locator('input[type=radio]:enabled').count();
    const radioNames = await page.getByTestId('analysis-form').locator('input[type=radio]:enabled').evaluateAll((els) => new Set(els.map((el) => (el as HTMLInputElement).name)).size);
    expect([...reached].length, [...reached].join('\n')).toBe(controls - radios + radioNames);
    expect(unmarked).toEqual([]);
    await context.close();
  });
});
