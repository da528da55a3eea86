/**
 * The extract area in a real browser: the demo analyst uploads a file through the
 * drag-and-drop panel, watches it process, confirms the dictionary with the attestation,
 * and pages through the rows; the demo clinician sees the profile but not the rows.
 */
import { writeFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Page } from 'playwright-core';
import { seedDemo } from '../../db/seed';
import { seedDemoExtracts } from '../../db/seeds/demoExtracts';
import { DEMO_PASSWORD, demoEmail } from '../../db/seeds/demo';
import { saveScreenshot, signInThroughPage, startHarness, waitForHydrated, type Harness } from './harness';
import { closeOwnerDb, ownerDb } from '../support/factories';

let harness: Harness;

beforeAll(async () => {
  await seedDemo(ownerDb());
  await seedDemoExtracts();
  harness = await startHarness();
});

afterAll(async () => {
  await harness?.close();
  await closeOwnerDb();
});


async function openCallBackExtracts(page: Page) {
  await page.getByRole('navigation', { name: 'Initiatives' }).getByRole('link', { name: /Call-back within 72 hours/ }).click();
  await page.getByRole('navigation', { name: 'Initiative sections' }).getByRole('link', { name: 'Extracts' }).click();
  await page.getByTestId('extracts-table').waitFor();
}

describe('extracts in the browser', () => {
  it('an analyst uploads, confirms and previews an extract', async () => {
    const { page, context, consoleErrors } = await harness.newPage();
    await signInThroughPage(page, demoEmail('analyst'), DEMO_PASSWORD);
    await openCallBackExtracts(page);
    await expect(page.getByTestId('extracts-table').textContent()).resolves.toContain('Discharges with call-back status (synthetic)');

    const file = path.join(os.tmpdir(), `ward-audit-${Date.now()}.csv`);
    const lines = ['call_back,readmitted_30d,age_band,los_days'];
    // Missing values as warehouses write them: NA and "." in los_days (10 rows each), and
    // "unknown" in age_band (8 rows), which the analyst declares missing.
    const band = (i: number) => (i % 50 === 49 ? 'unknown' : ['18-44', '45-64', '65-79', '80+'][i % 4]);
    const los = (i: number) => (i % 40 === 7 ? 'NA' : i % 40 === 13 ? '.' : (2 + (i % 9) * 0.5).toFixed(1));
    for (let i = 0; i < 400; i += 1) lines.push(`${i % 2},${i % 6 === 0 ? 1 : 0},${band(i)},${los(i)}`);
    writeFileSync(file, `${lines.join('\n')}\n`);
    await waitForHydrated(page, 'upload-panel');
    await page.getByTestId('upload-file').setInputFiles(file);
    await expect(page.getByLabel('Name of the extract').inputValue()).resolves.toBe(path.basename(file, '.csv'));
    await page.getByLabel('Name of the extract').fill('Ward audit sample (synthetic)');
    await page.getByRole('button', { name: 'Upload', exact: true }).click();
    await page.getByTestId('upload-done').waitFor();
    await expect(page.getByTestId('upload-done').textContent()).resolves.toContain('400 rows and 4 columns');
    await saveScreenshot(page, 'extract-uploaded');
    await page.getByRole('link', { name: 'Review version 1' }).click();

    await expect(page.getByTestId('tokens-los_days').textContent()).resolves.toBe('Read as missing: NA 10, . 10');
    await expect(page.getByTestId('suspect-age_band').textContent()).resolves.toContain('“unknown” may stand for a missing value');
    await page.getByTestId('suspect-age_band').getByRole('button', { name: 'Declare it missing' }).click();
    await expect(page.getByLabel('Further missing-value codes of age_band').inputValue()).resolves.toBe('unknown');
    await page.getByLabel('Type of los_days').selectOption('continuous');
    await page.getByLabel('Description of los_days').fill('Length of stay, days');
    await page.getByLabel('I have checked the extract and make this statement.').check();
    await page.getByLabel('Your full name, as signature').fill('Ada Marsh');
    await page.getByRole('button', { name: 'Sign and confirm this version' }).click();
    await page.getByTestId('attestation').waitFor();
    await expect(page.getByTestId('attestation').textContent()).resolves.toContain('Ada Marsh');
    await expect(page.getByTestId('declared-missing-age_band').textContent()).resolves.toBe('declared missing: unknown');
    await expect(page.getByTestId('missing-tokens-los_days').textContent()).resolves.toBe('NA 10, . 10');

    await page.getByRole('button', { name: 'Show rows' }).click();
    await page.getByTestId('rows-preview').locator('tbody tr').first().waitFor();
    await expect(page.getByTestId('rows-preview').locator('tbody tr').count()).resolves.toBe(25);
    await page.getByRole('button', { name: /los_days/ }).click();
    await page.waitForFunction(() => document.querySelector('[data-testid="rows-preview"] th[aria-sort]') !== null);
    await saveScreenshot(page, 'extract-page');
    expect(consoleErrors).toEqual([]);
    await context.close();
  });

  it('a refused upload can be sent again without its flagged columns', async () => {
    const { page, context, consoleErrors } = await harness.newPage();
    await signInThroughPage(page, demoEmail('analyst'), DEMO_PASSWORD);
    await openCallBackExtracts(page);
    const file = path.join(os.tmpdir(), `with-contacts-${Date.now()}.csv`);
    const lines = ['contact_email,call_back,readmitted_30d'];
    for (let i = 0; i < 60; i += 1) lines.push(`person${i}@mail.example,${i % 2},${i % 4 === 0 ? 1 : 0}`);
    writeFileSync(file, `${lines.join('\n')}\n`);
    await waitForHydrated(page, 'upload-panel');
    await page.getByTestId('upload-file').setInputFiles(file);
    await page.getByLabel('Name of the extract').fill('Contacts sample (synthetic)');
    await page.getByRole('button', { name: 'Upload', exact: true }).click();
    await page.getByTestId('upload-refused').waitFor();
    await expect(page.getByTestId('upload-refused').textContent()).resolves.toContain('contact_email');
    await saveScreenshot(page, 'extract-refused');
    await page.getByTestId('retry-without').click();
    await page.getByTestId('upload-done').waitFor();
    await expect(page.getByTestId('upload-done').textContent()).resolves.toContain('60 rows and 2 columns');
    expect(consoleErrors).toEqual([]);
    await context.close();
  });

  it('a column refused for its name alone is kept with a reason, and the table shows the new extract without a reload', async () => {
    const { page, context, consoleErrors } = await harness.newPage();
    await signInThroughPage(page, demoEmail('analyst'), DEMO_PASSWORD);
    await openCallBackExtracts(page);
    // phone_call is the intervention (0/1): only its name looks like a telephone identifier.
    const file = path.join(os.tmpdir(), `phone-calls-${Date.now()}.csv`);
    const lines = ['phone_call,readmitted_30d,age_band'];
    for (let i = 0; i < 80; i += 1) lines.push(`${i % 2},${i % 5 === 0 ? 1 : 0},${['18-44', '45-64', '65-79', '80+'][i % 4]}`);
    writeFileSync(file, `${lines.join('\n')}\n`);
    await waitForHydrated(page, 'upload-panel');
    await waitForHydrated(page, 'extracts-table');
    await expect(page.getByTestId('extracts-table').textContent()).resolves.not.toContain('Follow-up calls (synthetic)');
    await page.getByTestId('upload-file').setInputFiles(file);
    await page.getByLabel('Name of the extract').fill('Follow-up calls (synthetic)');
    await page.getByRole('button', { name: 'Upload', exact: true }).click();
    await page.getByTestId('upload-refused').waitFor();
    await expect(page.getByTestId('upload-refused').textContent()).resolves.toContain('phone_call');
    await page.getByRole('button', { name: 'Keep this column: it is not an identifier' }).click();
    await page.getByLabel('Why is it not an identifier?').fill('0/1 flag: whether the ward phoned the patient after discharge.');
    await saveScreenshot(page, 'extract-keep-column');
    await page.getByRole('button', { name: 'Upload again keeping phone_call' }).click();
    await page.getByTestId('upload-done').waitFor();
    await expect(page.getByTestId('upload-done').textContent()).resolves.toContain('80 rows and 3 columns');
    // The table picks up the new extract without a reload.
    await page.getByTestId('extracts-table').getByRole('link', { name: 'Follow-up calls (synthetic)' }).waitFor();
    await saveScreenshot(page, 'extract-table-updated');
    await page.getByTestId('extracts-table').getByRole('link', { name: 'Follow-up calls (synthetic)' }).click();
    await page.getByTestId('kept-phone_call').waitFor();
    await expect(page.getByTestId('kept-phone_call').textContent()).resolves.toContain('whether the ward phoned the patient');
    await saveScreenshot(page, 'extract-kept-column');
    expect(consoleErrors).toEqual([]);
    await context.close();
  });

  it('a clinician sees the profile and dictionary but no rows', async () => {
    const { page, context, consoleErrors } = await harness.newPage();
    await signInThroughPage(page, demoEmail('clinician'), DEMO_PASSWORD);
    await openCallBackExtracts(page);
    await page.getByRole('link', { name: 'Discharges with call-back status (synthetic)' }).click();
    await page.getByTestId('profile-table').waitFor();
    await expect(page.getByTestId('profile-table').textContent()).resolves.toContain('age_band');
    await expect(page.getByRole('button', { name: 'Show rows' }).count()).resolves.toBe(0);
    await expect(page.getByText('shows row-level data to analysts only').count()).resolves.toBe(1);
    await saveScreenshot(page, 'extract-clinician');
    expect(consoleErrors).toEqual([]);
    await context.close();
  });
});
