/**
 * Sign-in and administration in a real browser: every demo account signs in through the
 * page, sees only its initiatives, and signs out; an invitation sent from the people page
 * arrives in the local mail server, and its link sets a password and signs the person in.
 */
import { readdirSync, readFileSync } from 'node:fs';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { seedDemo } from '../../db/seed';
import { DEMO_INITIATIVES, DEMO_PASSWORD, DEMO_USERS, demoEmail } from '../../db/seeds/demo';
import { mailDir, saveScreenshot, signInThroughPage, startHarness, type Harness } from './harness';
import { closeOwnerDb, makeInitiative, ownerDb } from '../support/factories';

let harness: Harness;
let otherInitiativeName: string;

beforeAll(async () => {
  await seedDemo(ownerDb());
  // An initiative no demo account belongs to: it must never appear for them.
  otherInitiativeName = (await makeInitiative('Night-shift handover (not a demo member)')).name;
  harness = await startHarness();
});

afterAll(async () => {
  await harness?.close();
  await closeOwnerDb();
});


describe('the demo accounts', () => {
  it.each(DEMO_USERS.map((u) => [u.local, u] as const))('%s signs in, sees only its initiatives, and signs out', async (_local, user) => {
    const { page, context, consoleErrors } = await harness.newPage();
    await signInThroughPage(page, demoEmail(user.local), DEMO_PASSWORD);
    await expect(page.getByTestId('signed-in-user').textContent()).resolves.toContain(user.displayName);
    const nav = page.getByRole('navigation', { name: 'Initiatives' });
    const navText = (await nav.textContent()) ?? '';
    for (const initiative of DEMO_INITIATIVES) {
      expect(navText.includes(initiative.name)).toBe(user.role !== null);
    }
    expect(navText).not.toContain(otherInitiativeName);
    if (user.isAdmin) {
      await page.goto('/admin/initiatives');
      // Administrators manage every initiative, including ones they are not in.
      await page.getByText(otherInitiativeName).waitFor();
    }
    await saveScreenshot(page, `signed-in-${user.local}`);
    await page.getByRole('button', { name: 'Sign out' }).click();
    await page.waitForURL(/\/sign-in\?notice=signed-out/);
    await page.goto('/profile');
    await page.waitForURL(/\/sign-in\?next=%2Fprofile/);
    expect(consoleErrors).toEqual([]);
    await context.close();
  });

  it('shows one refusal message for a wrong password', async () => {
    const { page, context } = await harness.newPage();
    await page.goto('/sign-in');
    await page.getByLabel('E-mail address').fill(demoEmail('analyst'));
    await page.getByLabel('Password').fill('definitely-not-it');
    await page.getByRole('button', { name: 'Sign in' }).click();
    await expect(page.getByTestId('sign-in-error').textContent()).resolves.toContain('do not match an active account');
    await saveScreenshot(page, 'sign-in-refused');
    await context.close();
  });
});

function messagesTo(address: string): { id: string; subject: string }[] {
  const summaries = readdirSync(mailDir).filter((f) => f.endsWith('.json'));
  return summaries
    .map((f) => JSON.parse(readFileSync(path.join(mailDir, f), 'utf8')) as { id: string; to: string[] | string; subject: string })
    .filter((m) => (Array.isArray(m.to) ? m.to : [m.to]).some((t) => t.includes(address)));
}

describe('an invitation', () => {
  it('goes out from the people page, arrives in the local mail server, and its link signs the person in', async () => {
    const invitee = `new.analyst.${Date.now()}@tern-valley.example`;
    const admin = await harness.newPage();
    await signInThroughPage(admin.page, demoEmail('admin'), DEMO_PASSWORD);
    await admin.page.goto('/admin/users');
    await admin.page.getByLabel('E-mail address').fill(invitee);
    await admin.page.getByLabel('Name', { exact: true }).fill('Noor Field');
    await admin.page.getByLabel('Initiative', { exact: true }).selectOption({ label: DEMO_INITIATIVES[0].name });
    await admin.page.getByLabel('Role there').selectOption('clinician');
    await admin.page.getByRole('button', { name: 'Send invitation' }).click();
    await expect(admin.page.getByTestId('invite-result').textContent()).resolves.toContain('Invitation sent');
    await admin.page.getByLabel('Filter people').fill('Noor');
    await admin.page.getByTestId('people-table').getByText(invitee).waitFor();
    await expect(admin.page.getByTestId('people-table').locator('tbody tr').count()).resolves.toBe(1);
    await saveScreenshot(admin.page, 'admin-people');

    // The message as the administrator sees it in the outbox.
    const [message] = messagesTo(invitee);
    expect(message.subject).toContain('invited');
    await admin.page.goto(`/admin/outbox/${message.id}`);
    await saveScreenshot(admin.page, 'outbox-invitation');
    const eml = readFileSync(path.join(mailDir, `${message.id}.eml`), 'utf8').replace(/=\r?\n/g, '').replace(/=3D/g, '=');
    const link = /http:\/\/127\.0\.0\.1:\d+\/invitation\?token=[A-Za-z0-9_%-]+/.exec(eml)?.[0];
    expect(link).toBeTruthy();
    expect(admin.consoleErrors).toEqual([]);
    await admin.context.close();

    const invited = await harness.newPage();
    await invited.page.goto(link!);
    await invited.page.getByLabel('New password').fill('short');
    await invited.page.getByRole('button', { name: 'Set password and sign in' }).click();
    await expect(invited.page.getByTestId('password-error').textContent()).resolves.toContain('at least 12');
    await invited.page.getByLabel('New password').fill('tidewater-osprey-ledger');
    await invited.page.getByRole('button', { name: 'Set password and sign in' }).click();
    await invited.page.waitForURL((url) => url.pathname === '/');
    await expect(invited.page.getByTestId('signed-in-user').textContent()).resolves.toContain('Noor Field');
    await expect(invited.page.getByRole('navigation', { name: 'Initiatives' }).textContent()).resolves.toContain(DEMO_INITIATIVES[0].name);
    await saveScreenshot(invited.page, 'invitation-accepted');

    // The link is single-use.
    await invited.page.goto(link!);
    await expect(invited.page.getByTestId('link-problem').textContent()).resolves.toContain('already been used');
    // The one refused attempt above answers 422, which the browser logs; nothing else may.
    expect(invited.consoleErrors.filter((e) => !/status of 422/.test(e))).toEqual([]);
    await invited.context.close();
  });
});
