/**
 * Notifications over HTTP (issue 12 §3): each event reaches the right people and no
 * others (a submission the clinicians, a send-back with its note and a sign-off the
 * analyst who started the run, a reply the comment's author, an @mention the member
 * named, a published brief the members); marking read (some or all); row-level security
 * (another person's notifications are invisible and cannot be marked); and e-mail as each
 * person chose it (immediately, a daily digest, or none) through the fake mail server.
 */
import { readFileSync } from 'node:fs';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createTransport } from 'nodemailer';
import { QueryTypes } from 'sequelize';
import { listMessages, readMessage } from '@/features/admin/outbox';
import { generateCallBackCohort } from '@/features/extracts/demoCohorts';
import { mailSettled, sendDigests, sendOverdueNotificationMail } from '@/features/notifications/notificationMail.server';
import { notifyReviewStep } from '@/features/notifications/notifications.server';
import { executeRun } from '@/features/runs/executeRun';
import { sequelize, withIdentity } from '@/lib/server/db';
import { hashPassword } from '@/lib/server/passwords';
import { mailDir, startServer, type ServerHandle } from '../browser/harness';
import { makeReadyExtract } from '../support/extractFactory';
import { addMember, closeOwnerDb, makeInitiative, makeUser, ownerDb } from '../support/factories';
import { ApiClient } from '../support/http';

type Role = 'analyst' | 'clinicianA' | 'clinicianB' | 'auditor' | 'outsider';
const password = 'heron-sluice-lantern';
const NAMES: Record<Role, string> = {
  analyst: 'Amara Quist', clinicianA: 'Dr Ines Okafor', clinicianB: 'Dr Tomas Reyes', auditor: 'Wren Halloway', outsider: 'Dr Ola Brandt',
};
let server: ServerHandle;
let initiativeId: string;
let runId: string;
const people = {} as Record<Role, { id: string; email: string; client: ApiClient }>;

interface Item { id: string; kind: string; text: string; excerpt: string; runId: string | null; shortRunId: string | null; briefId: string | null; link: string; read: boolean }
const inbox = async (role: Role): Promise<{ unread: number; items: Item[] }> => {
  const response = await people[role].client.request('GET', '/api/me/notifications?limit=100');
  expect(response.status).toBe(200);
  return response.json();
};
const kinds = async (role: Role) => (await inbox(role)).items.map((i) => i.kind).sort();

/** The messages to an address whose subject matches, waiting up to 5 s for mail sent after a commit. */
async function mailTo(email: string, subject: RegExp, atLeast = 1) {
  const until = Date.now() + 5_000;
  for (;;) {
    const found = (await listMessages({ dir: mailDir, pageSize: 100 })).messages.filter((m) => m.to.includes(email) && subject.test(m.subject));
    if (found.length >= atLeast || Date.now() > until) return found;
    await new Promise((resolve) => setTimeout(resolve, 100));
  }
}

beforeAll(async () => {
  server = await startServer();
  const hash = await hashPassword(password);
  initiativeId = (await makeInitiative('Notification ward')).id;
  const other = (await makeInitiative('Other notification ward')).id;
  const roles: [Role, string, 'analyst' | 'clinician' | 'auditor'][] = [
    ['analyst', initiativeId, 'analyst'], ['clinicianA', initiativeId, 'clinician'], ['clinicianB', initiativeId, 'clinician'],
    ['auditor', initiativeId, 'auditor'], ['outsider', other, 'clinician'],
  ];
  for (const [role, where, as] of roles) {
    const user = await makeUser({ passwordHash: hash });
    await ownerDb().query('UPDATE users SET display_name = :name WHERE id = :id', { replacements: { name: NAMES[role], id: user.id } });
    await addMember(where, user.id, as);
    const client = new ApiClient();
    expect((await client.signIn(user.email, password)).status).toBe(204);
    people[role] = { id: user.id, email: user.email, client };
  }
  // Clinician A wants a daily digest, clinician B no e-mail; the others keep the default (immediate).
  expect((await people.clinicianA.client.request('PUT', '/api/me/notifications/settings', { mail: 'daily' })).status).toBe(200);
  expect((await people.clinicianB.client.request('PUT', '/api/me/notifications/settings', { mail: 'none' })).status).toBe(200);
  const { versionId } = await makeReadyExtract(people.analyst.id, initiativeId, generateCallBackCohort({ rows: 1200 }).csv);
  const created = await people.analyst.client.request('POST', '/api/analyses', {
    initiativeId, extractVersionId: versionId, title: 'Call-back by age band', question: 'Does the call-back help older patients more?', prespecified: true,
    spec: {
      outcome: { column: 'readmitted_30d', type: 'binary' }, exposure: { column: 'call_back', reference: '0' },
      modifier: { column: 'age_band', type: 'categorical', reference: '18-44' }, covariates: [], model: 'logistic', ci: { level: 0.95, method: 'delta' },
    },
  });
  const analysisId = (await created.json()).id;
  runId = (await (await people.analyst.client.request('POST', `/api/analyses/${analysisId}/runs`, {})).json()).runId;
  expect(await executeRun(runId, people.analyst.id, { threads: 0 })).toBe('succeeded');
}, 120_000);

afterAll(async () => {
  await server?.close();
  await closeOwnerDb();
});

describe('who hears of what', () => {
  it('tells the clinicians, and only them, that a run was submitted', async () => {
    expect((await people.analyst.client.request('POST', `/api/runs/${runId}/review/submit`, {})).status).toBe(200);
    expect(await kinds('clinicianA')).toEqual(['submitted']);
    expect(await kinds('clinicianB')).toEqual(['submitted']);
    for (const role of ['analyst', 'auditor', 'outsider'] as const) expect(await kinds(role), role).toEqual([]);
    const [item] = (await inbox('clinicianA')).items;
    expect(item.text).toBe(`Amara Quist submitted “Call-back by age band” (run ${runId.slice(0, 8)}) for review`);
    expect(item).toMatchObject({ runId, shortRunId: runId.slice(0, 8), link: `/runs/${runId}`, read: false });
  });

  it('tells the analyst that the run was sent back, with the note', async () => {
    const note = 'Please adjust for comorbidity before we brief this.';
    expect((await people.clinicianA.client.request('POST', `/api/runs/${runId}/review/decision`, { decision: 'send-back', note, meaning: 'returned for changes', password })).status).toBe(200);
    const { unread, items } = await inbox('analyst');
    expect(unread).toBe(1);
    expect(items[0]).toMatchObject({ kind: 'sent-back', excerpt: note, text: `Dr Ines Okafor sent back “Call-back by age band” (run ${runId.slice(0, 8)})` });
    expect(await kinds('clinicianA')).toEqual(['submitted']);
    expect(await kinds('clinicianB')).toEqual(['submitted']);
    expect(await kinds('auditor')).toEqual([]);
  });

  it('tells the author of a comment of a reply, and a member named with @ of the mention, and nobody else', async () => {
    const first = await people.clinicianA.client.request('POST', `/api/runs/${runId}/comments`, { body: 'The 75+ band is thin. @dr tomas reyes, does that match the ward?' });
    expect(first.status).toBe(201);
    const commentId = (await first.json()).id;
    expect(await kinds('clinicianB')).toEqual(['mention', 'submitted']);
    expect(await kinds('analyst')).toEqual(['sent-back']);
    const reply = await people.analyst.client.request('POST', `/api/runs/${runId}/comments`, {
      body: `It does. Copying @${people.auditor.email} and @${people.outsider.email}; @Dr Ines Okafor see the refit.`, parentId: commentId,
    });
    expect(reply.status).toBe(201);
    // The author replied to hears once (the reply), not twice; the auditor is mentioned by e-mail; the outsider is no member.
    expect(await kinds('clinicianA')).toEqual(['reply', 'submitted']);
    expect(await kinds('auditor')).toEqual(['mention']);
    expect(await kinds('outsider')).toEqual([]);
    expect(await kinds('clinicianB')).toEqual(['mention', 'submitted']);
    expect((await inbox('auditor')).items[0].text).toBe(`Amara Quist mentioned you in a comment on “Call-back by age band” (run ${runId.slice(0, 8)})`);
  });

  it('tells the analyst that the run was signed off, and the members that a brief was published', async () => {
    expect((await people.analyst.client.request('POST', `/api/runs/${runId}/review/submit`, {})).status).toBe(200);
    expect((await people.clinicianB.client.request('POST', `/api/runs/${runId}/review/decision`, { decision: 'sign-off', note: 'Plausible.', meaning: 'reviewed, no objection', password })).status).toBe(200);
    expect(await kinds('analyst')).toEqual(['sent-back', 'signed-off']);
    expect(await kinds('clinicianA')).toEqual(['reply', 'submitted', 'submitted']);
    // Run lists name the run by short id with its review state (the overview's latest runs).
    const overview = await (await people.auditor.client.request('GET', `/initiatives/${initiativeId}`)).text();
    expect(overview).toContain(`run ${runId.slice(0, 8)}`);
    expect(overview).toMatch(/data-testid="recent-run-review"[^>]*>Signed off</);
    const drafted = await people.analyst.client.request('POST', `/api/runs/${runId}/briefs`, { title: 'Call-back and age', summary: 'An exploratory look.' });
    expect(drafted.status).toBe(201);
    const briefId = (await drafted.json()).id;
    expect((await people.analyst.client.request('POST', `/api/briefs/${briefId}/publish`, {})).status).toBe(200);
    for (const role of ['clinicianA', 'clinicianB', 'auditor'] as const) {
      const published = (await inbox(role)).items.filter((i) => i.kind === 'brief-published');
      expect(published.map((i) => [i.briefId, i.link, i.text]), role).toEqual([[briefId, `/briefs/${briefId}`, 'Amara Quist published the brief “Call-back and age”']]);
    }
    expect(await kinds('analyst')).toEqual(['sent-back', 'signed-off']);
    expect(await kinds('outsider')).toEqual([]);
  }, 60_000);
});

describe('marking read', () => {
  it('marks the ids named, then all, and the count follows', async () => {
    const before = await inbox('clinicianB');
    // Two submissions (the run was submitted again after it was sent back), a mention and a brief.
    expect(before.unread).toBe(4);
    const one = await people.clinicianB.client.request('POST', '/api/me/notifications/read', { ids: [before.items[0].id] });
    expect(await one.json()).toEqual({ marked: 1, unread: 3 });
    expect((await inbox('clinicianB')).items.find((i) => i.id === before.items[0].id)?.read).toBe(true);
    const all = await people.clinicianB.client.request('POST', '/api/me/notifications/read', { all: true });
    expect(await all.json()).toEqual({ marked: 3, unread: 0 });
  });

  it('refuses a body that names nothing, and changes nothing', async () => {
    const response = await people.analyst.client.request('POST', '/api/me/notifications/read', { ids: [] });
    expect(response.status).toBe(400);
    expect((await inbox('analyst')).unread).toBe(2);
  });

  it("cannot mark another person's notifications", async () => {
    const theirs = (await inbox('analyst')).items.map((i) => i.id);
    const response = await people.auditor.client.request('POST', '/api/me/notifications/read', { ids: theirs });
    expect((await response.json()).marked).toBe(0);
    expect((await inbox('analyst')).unread).toBe(2);
  });
});

describe('row-level security', () => {
  it("shows a person only their own notifications, below the API too", async () => {
    const [{ n: total }] = await ownerDb().query<{ n: string }>('SELECT count(*) AS n FROM notifications WHERE recipient_id = :id', { replacements: { id: people.analyst.id }, type: QueryTypes.SELECT });
    expect(Number(total)).toBe(2);
    const seen = await withIdentity(people.clinicianA.id, (transaction) =>
      sequelize.query<{ n: string }>('SELECT count(*) AS n FROM notifications WHERE recipient_id = :id', { replacements: { id: people.analyst.id }, type: QueryTypes.SELECT, transaction }));
    expect(Number(seen[0].n)).toBe(0);
  });

  it('refuses a notification written in someone else’s name or for a non-member', async () => {
    const insert = (actor: string, recipient: string) => withIdentity(people.clinicianA.id, (transaction) => sequelize.query(
      `INSERT INTO notifications (recipient_id, initiative_id, actor_id, kind, run_id, title) VALUES (:recipient, :initiativeId, :actor, 'mention', :runId, 'x')`,
      { replacements: { recipient, actor, initiativeId, runId }, transaction },
    ));
    await expect(insert(people.clinicianB.id, people.analyst.id)).rejects.toThrow(/row-level security/);
    await expect(insert(people.clinicianA.id, people.outsider.id)).rejects.toThrow(/row-level security/);
  });
});

describe('e-mail', () => {
  it('sends immediate mail to those who chose it, none to the others', async () => {
    const sentBack = await mailTo(people.analyst.email, /sent back/);
    expect(sentBack).toHaveLength(1);
    const message = await readMessage(sentBack[0].id, { dir: mailDir });
    expect(message.text).toContain('Please adjust for comorbidity before we brief this.');
    expect(message.text).toContain(`/runs/${runId}`);
    expect(await mailTo(people.auditor.email, /mentioned you/)).toHaveLength(1);
    // Daily and none: nothing right away (clinician B was told of a submission, a mention and a brief).
    expect(await mailTo(people.clinicianB.email, /./, 99)).toHaveLength(0);
    expect((await listMessages({ dir: mailDir, pageSize: 100 })).messages.filter((m) => m.to.includes(people.clinicianA.email))).toHaveLength(0);
  });

  it('marks immediate mail sent once it is sent, so the sweep sends nothing twice', async () => {
    await mailTo(people.analyst.email, /sent back/);
    const [{ pending }] = await ownerDb().query<{ pending: number }>(
      "SELECT count(*)::int AS pending FROM notifications WHERE recipient_id = :id AND mail_state = 'pending'",
      { replacements: { id: people.analyst.id }, type: QueryTypes.SELECT },
    );
    expect(pending).toBe(0);
    const before = (await mailTo(people.analyst.email, /./, 99)).length;
    await sendOverdueNotificationMail({ olderThanSeconds: 0 });
    expect(await mailTo(people.analyst.email, /./, before + 1)).toHaveLength(before);
  });

  it('lets a process wait until the mail it sends after a commit is sent and marked (the demo seed does before it closes)', async () => {
    const note = `Marked before closing ${Date.now()}`;
    await withIdentity(people.clinicianA.id, (t) =>
      notifyReviewStep(t, people.clinicianA.id, { id: runId, initiativeId, startedBy: people.analyst.id }, 'sent-back', note));
    await mailSettled();
    const [row] = await ownerDb().query<{ mail_state: string; mail_attempts: number }>(
      'SELECT mail_state, mail_attempts FROM notifications WHERE recipient_id = :id AND excerpt = :note',
      { replacements: { id: people.analyst.id, note }, type: QueryTypes.SELECT },
    );
    expect(row).toEqual({ mail_state: 'sent', mail_attempts: 1 });
  });

  it('sends, from the sweep, a mail whose sender stopped after the commit, and only once', async () => {
    // A notification committed with its mail pending and never sent, as when the process
    // that wrote it stops between the commit and the send.
    const [{ id }] = await ownerDb().query<{ id: string }>(
      `INSERT INTO notifications (recipient_id, initiative_id, actor_id, kind, run_id, title, mail_state, created_at)
       VALUES (:recipient, :initiativeId, :actor, 'signed-off', :runId, 'Stranded sign-off', 'pending', now() - interval '2 minutes') RETURNING id`,
      { replacements: { recipient: people.analyst.id, actor: people.clinicianA.id, initiativeId, runId }, type: QueryTypes.SELECT },
    );
    // Not yet overdue at a ten-minute threshold; overdue at one minute.
    expect(await sendOverdueNotificationMail({ olderThanSeconds: 600 })).toBe(0);
    expect(await sendOverdueNotificationMail({ olderThanSeconds: 60 })).toBe(1);
    const stranded = await mailTo(people.analyst.email, /Stranded sign-off/);
    expect(stranded).toHaveLength(1);
    expect(stranded[0].subject).toContain(NAMES.clinicianA);
    expect(await sendOverdueNotificationMail({ olderThanSeconds: 0 })).toBe(0);
    expect(await mailTo(people.analyst.email, /Stranded sign-off/, 2)).toHaveLength(1);
    const [row] = await ownerDb().query<{ mail_state: string; mail_attempts: number }>(
      'SELECT mail_state, mail_attempts FROM notifications WHERE id = :id', { replacements: { id }, type: QueryTypes.SELECT },
    );
    expect(row).toEqual({ mail_state: 'sent', mail_attempts: 1 });
  });

  it('keeps a mail pending when the mail server refuses it, and gives up after five attempts', async () => {
    const [{ id }] = await ownerDb().query<{ id: string }>(
      `INSERT INTO notifications (recipient_id, initiative_id, actor_id, kind, run_id, title, mail_state, created_at)
       VALUES (:recipient, :initiativeId, :actor, 'signed-off', :runId, 'Refused sign-off', 'pending', now() - interval '2 minutes') RETURNING id`,
      { replacements: { recipient: people.analyst.id, actor: people.clinicianA.id, initiativeId, runId }, type: QueryTypes.SELECT },
    );
    // Nothing listens on port 9 of loopback: every send is refused.
    const refusing = createTransport({ host: '127.0.0.1', port: 9, connectionTimeout: 2_000 });
    const state = async () => (await ownerDb().query<{ mail_state: string; mail_attempts: number }>(
      'SELECT mail_state, mail_attempts FROM notifications WHERE id = :id', { replacements: { id }, type: QueryTypes.SELECT },
    ))[0];
    for (let attempt = 1; attempt <= 5; attempt += 1) {
      // Each attempt holds the mail for a lease; end it, as five minutes passing would.
      await ownerDb().query('UPDATE notifications SET mail_claimed_at = mail_claimed_at - interval \'10 minutes\' WHERE id = :id', { replacements: { id } });
      expect(await sendOverdueNotificationMail({ olderThanSeconds: 60, transport: refusing })).toBe(0);
      expect(await state()).toEqual({ mail_state: 'pending', mail_attempts: attempt });
    }
    await ownerDb().query('UPDATE notifications SET mail_claimed_at = mail_claimed_at - interval \'10 minutes\' WHERE id = :id', { replacements: { id } });
    expect(await sendOverdueNotificationMail({ olderThanSeconds: 60 })).toBe(0);
    expect(await state()).toEqual({ mail_state: 'failed', mail_attempts: 5 });
  });

  it('sends a digest of the unread notifications to those who chose it, once', async () => {
    expect(await sendDigests({ everyHours: 0 })).toBeGreaterThanOrEqual(1);
    const digests = await mailTo(people.clinicianA.email, /digest/);
    expect(digests).toHaveLength(1);
    expect(digests[0].subject).toBe('Crossgrain digest: 4 unread notifications');
    const text = (await readMessage(digests[0].id, { dir: mailDir })).text;
    for (const line of ['submitted “Call-back by age band”', 'replied to your comment', 'published the brief “Call-back and age”']) expect(text).toContain(line);
    // Nothing new since: no second digest, and still nothing for the person who chose none.
    await sendDigests({ everyHours: 0 });
    expect(await mailTo(people.clinicianA.email, /digest/, 2)).toHaveLength(1);
    expect(await mailTo(people.clinicianB.email, /./, 99)).toHaveLength(0);
  });

  it('refuses an unknown e-mail choice', async () => {
    const response = await people.analyst.client.request('PUT', '/api/me/notifications/settings', { mail: 'weekly' });
    expect(response.status).toBe(400);
    expect(await (await people.analyst.client.request('GET', '/api/me/notifications/settings')).json()).toEqual({ mail: 'immediate' });
  });
});

describe('when the mail server is down', () => {
  it('still records the comment and its notification, and answers as usual', async () => {
    const log = path.join(process.env.CROSSGRAIN_ARTIFACTS_DIR ?? path.resolve(import.meta.dirname, '../../.test-artifacts'), 'test-server.log');
    const failures = () => readFileSync(log, 'utf8').split('\n').filter((line) => line.includes('notification e-mail not sent') && line.includes('ECONNREFUSED')).length;
    const failedBefore = failures();
    await server.mail.close();
    const before = (await inbox('analyst')).unread;
    const response = await people.clinicianB.client.request('POST', `/api/runs/${runId}/comments`, { body: '@Amara Quist one more question on the 75+ band.' });
    expect(response.status).toBe(201);
    const after = await inbox('analyst');
    expect(after.unread).toBe(before + 1);
    expect(after.items[0]).toMatchObject({ kind: 'mention', excerpt: '@Amara Quist one more question on the 75+ band.' });
    // The send is tried after the commit, fails, and is logged (recipient's domain only).
    await expect.poll(failures, { timeout: 5_000 }).toBe(failedBefore + 1);
    expect((await people.analyst.client.request('GET', '/api/me/notifications')).status).toBe(200);
  });
});
