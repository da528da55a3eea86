/**
 * Notifications in a real browser (issue 12 §3): after a clinician sends a run back, the
 * analyst sees the bell's count in the header, opens the list from the keyboard, reads
 * the notification naming the run, marks it read (the count goes), and the home page lists
 * the run as sent back with the clinician's note.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { generateCallBackCohort } from '@/features/extracts/demoCohorts';
import { executeRun } from '@/features/runs/executeRun';
import { hashPassword } from '@/lib/server/passwords';
import { saveScreenshot, signInThroughPage, startHarness, type Harness } from './harness';
import { makeReadyExtract } from '../support/extractFactory';
import { addMember, closeOwnerDb, makeInitiative, makeUser, ownerDb } from '../support/factories';
import { ApiClient } from '../support/http';

const password = 'heron-sluice-lantern';
const note = 'Please adjust for comorbidity before we brief this.';
let harness: Harness;
let analystEmail = '';
let runId = '';

beforeAll(async () => {
  harness = await startHarness();
  const hash = await hashPassword(password);
  const initiativeId = (await makeInitiative('Bell ward')).id;
  const analyst = await makeUser({ passwordHash: hash });
  const clinician = await makeUser({ passwordHash: hash });
  await ownerDb().query("UPDATE users SET display_name = 'Dr Ines Okafor' WHERE id = :id", { replacements: { id: clinician.id } });
  await addMember(initiativeId, analyst.id, 'analyst');
  await addMember(initiativeId, clinician.id, 'clinician');
  analystEmail = analyst.email;
  const analystApi = new ApiClient();
  expect((await analystApi.signIn(analyst.email, password)).status).toBe(204);
  const { versionId } = await makeReadyExtract(analyst.id, initiativeId, generateCallBackCohort({ rows: 1200 }).csv);
  const created = await analystApi.request('POST', '/api/analyses', {
    initiativeId, extractVersionId: versionId, title: 'Call-back by age band', question: 'Does the call-back help older patients more?', prespecified: true,
    spec: {
      outcome: { column: 'readmitted_30d', type: 'binary' }, exposure: { column: 'call_back', reference: '0' },
      modifier: { column: 'age_band', type: 'categorical', reference: '18-44' }, covariates: [], model: 'logistic', ci: { level: 0.95, method: 'delta' },
    },
  });
  const analysisId = (await created.json()).id;
  runId = (await (await analystApi.request('POST', `/api/analyses/${analysisId}/runs`, {})).json()).runId;
  expect(await executeRun(runId, analyst.id, { threads: 0 })).toBe('succeeded');
  expect((await analystApi.request('POST', `/api/runs/${runId}/review/submit`, {})).status).toBe(200);
  const clinicianApi = new ApiClient();
  expect((await clinicianApi.signIn(clinician.email, password)).status).toBe(204);
  expect((await clinicianApi.request('POST', `/api/runs/${runId}/review/decision`, { decision: 'send-back', note, meaning: 'returned for changes', password })).status).toBe(200);
}, 120_000);

afterAll(async () => {
  await harness?.close();
  await closeOwnerDb();
});

describe('the analyst hears that a run was sent back', () => {
  it('shows the bell count, the list from the keyboard, marks read, and lists the run with its note at home', async () => {
    const { page, consoleErrors } = await harness.newPage();
    await signInThroughPage(page, analystEmail, password);
    await page.goto('/');
    const bell = page.getByTestId('notification-bell');
    await page.locator('[data-testid="notification-bell"][data-hydrated="true"]').waitFor();
    await expect.poll(() => page.getByTestId('notification-count').textContent()).toBe('1');
    const button = page.getByRole('button', { name: 'Notifications, 1 unread' });

    // The home page: the run, its short id, "Sent back" and the clinician's note.
    const mine = page.locator(`[data-testid="my-runs"] li[data-run-id="${runId}"]`);
    expect(await mine.getByTestId('my-run-review').textContent()).toBe('Sent back');
    expect(await mine.textContent()).toContain(`run ${runId.slice(0, 8)}`);
    expect(await mine.getByTestId('my-run-note').textContent()).toContain(`Dr Ines Okafor`);
    expect(await mine.getByTestId('my-run-note').textContent()).toContain(note);

    // Open from the keyboard.
    await button.focus();
    await page.keyboard.press('Enter');
    const list = page.getByRole('region', { name: 'Notifications' });
    await list.waitFor();
    const item = list.locator('li').first();
    expect(await item.textContent()).toContain(`Dr Ines Okafor sent back “Call-back by age band” (run ${runId.slice(0, 8)})`);
    expect(await item.getByRole('link').getAttribute('href')).toBe(`/runs/${runId}`);
    await saveScreenshot(page, 'notifications-bell-open');

    // Mark read: the count goes and the item shows as read.
    await item.getByRole('button', { name: 'Mark read' }).click();
    await expect.poll(() => page.getByTestId('notification-count').count()).toBe(0);
    expect(await bell.getByRole('button', { name: 'Notifications, none unread' }).count()).toBe(1);
    await expect.poll(() => list.locator('li').first().getAttribute('data-read')).toBe('true');

    // Escape closes the list and gives focus back to the bell.
    await page.keyboard.press('Escape');
    await expect.poll(() => list.count()).toBe(0);
    expect(await page.evaluate(() => document.activeElement?.getAttribute('aria-label'))).toBe('Notifications, none unread');
    await saveScreenshot(page, 'notifications-home-sent-back');
    expect(consoleErrors).toEqual([]);
  }, 60_000);
});
