/**
 * An initiative's audit trail over HTTP: only its auditors list and export it (others get
 * 403, non-members 404, for the API and the page); filters by area, action, person,
 * subject and UTC dates; paging; the export carries the caution first, every matching
 * event in chain order with its hashes, neutralised CSV fields, and is itself audited.
 * Standards: HIPAA 45 CFR 164.312(b), NIST SP 800-53 AU-9 (shared design standards).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { parse } from 'csv-parse/sync';
import { QueryTypes } from 'sequelize';
import { recordAudit } from '@/features/audit/audit.server';
import { STANDING_CAUTION } from '@/lib/cautions';
import { withIdentity } from '@/lib/server/db';
import { hashPassword } from '@/lib/server/passwords';
import { startServer, type ServerHandle } from '../browser/harness';
import { addMember, closeOwnerDb, makeInitiative, makeUser, ownerDb } from '../support/factories';
import { ApiClient } from '../support/http';

const password = 'osprey-tidal-ledger';
let server: ServerHandle;
let initiativeId: string;
let analystId: string;
const runId = '6f1c2e0a-0000-4000-8000-000000000001';
const clients: Record<'auditor' | 'analyst' | 'outsider', ApiClient> = {} as never;

beforeAll(async () => {
  server = await startServer();
  const hash = await hashPassword(password);
  initiativeId = (await makeInitiative('Audit ward')).id;
  const other = (await makeInitiative('Other audit ward')).id;
  for (const [role, where] of [['auditor', initiativeId], ['analyst', initiativeId], ['outsider', other]] as const) {
    const user = await makeUser({ passwordHash: hash });
    await addMember(where, user.id, role === 'outsider' ? 'auditor' : role);
    if (role === 'analyst') analystId = user.id;
    const client = new ApiClient();
    expect((await client.signIn(user.email, password)).status).toBe(204);
    clients[role] = client;
  }
  // Twelve events in this initiative: six runs started, five finished, and one whose
  // subject id starts like a spreadsheet formula.
  for (let i = 0; i < 6; i += 1) {
    await withIdentity(analystId, (t) => recordAudit(t, { action: 'run.started', actorId: analystId, subjectType: 'run', subjectId: i === 0 ? runId : `run-${i}`, initiativeId, details: { i } }));
  }
  for (let i = 0; i < 5; i += 1) {
    await withIdentity(analystId, (t) => recordAudit(t, { action: 'run.finished', actorId: analystId, subjectType: 'run', subjectId: `run-${i}`, initiativeId, details: { i } }));
  }
  await withIdentity(analystId, (t) => recordAudit(t, { action: 'analysis.created', actorId: analystId, subjectType: 'analysis', subjectId: '=cmd|calc', initiativeId, details: { title: 'By age band' } }));
});

afterAll(async () => {
  await server?.close();
  await closeOwnerDb();
});

const list = (query = '') => clients.auditor.request('GET', `/api/initiatives/${initiativeId}/audit-events${query}`);

describe('listing the trail', () => {
  it('is for the initiative’s auditors only', async () => {
    expect((await list()).status).toBe(200);
    expect((await clients.analyst.request('GET', `/api/initiatives/${initiativeId}/audit-events`)).status).toBe(403);
    expect((await clients.outsider.request('GET', `/api/initiatives/${initiativeId}/audit-events`)).status).toBe(404);
    expect((await clients.analyst.request('GET', `/api/initiatives/${initiativeId}/audit-events/export`)).status).toBe(403);
    expect((await clients.outsider.request('GET', `/api/initiatives/${initiativeId}/audit-events/export`)).status).toBe(404);
    expect((await clients.analyst.request('GET', `/initiatives/${initiativeId}/audit`)).status).toBe(404);
    expect((await clients.outsider.request('GET', `/initiatives/${initiativeId}/audit`)).status).toBe(404);
    const page = await clients.auditor.request('GET', `/initiatives/${initiativeId}/audit`);
    expect(page.status).toBe(200);
    expect(await page.text()).toContain('Events 1–12 of 12, newest first');
  });

  it('filters by area, action, person, subject and date, newest first', async () => {
    const all = await (await list()).json();
    expect(all.total).toBe(12);
    const positions = all.events.map((e: { position: number }) => e.position);
    expect(positions).toEqual([...positions].sort((a, b) => b - a));
    expect(all.events[0]).toMatchObject({ action: 'analysis.created', actor: { id: analystId }, actorRole: 'analyst', hash: expect.stringMatching(/^[0-9a-f]{64}$/) });

    expect((await (await list('?action=run')).json()).total).toBe(11);
    expect((await (await list('?action=run.finished')).json()).total).toBe(5);
    expect((await (await list('?action=ru')).json()).total).toBe(0);
    expect((await (await list(`?actor=${analystId}`)).json()).total).toBe(12);
    expect((await (await list(`?subject=${runId}`)).json()).events.map((e: { action: string }) => e.action)).toEqual(['run.started']);
    const today = new Date().toISOString().slice(0, 10);
    expect((await (await list(`?from=${today}&to=${today}`)).json()).total).toBe(12);
    expect((await (await list('?to=2026-01-01')).json()).total).toBe(0);
  });

  it('pages, and refuses bad filters with field messages', async () => {
    const first = await (await list('?pageSize=10')).json();
    const second = await (await list('?pageSize=10&page=2')).json();
    expect(first.events).toHaveLength(10);
    expect(second.events).toHaveLength(2);
    expect(second.events[0].position).toBeLessThan(first.events[9].position);

    const bad = await list('?from=yesterday&actor=someone&to=2026-01-01');
    expect(bad.status).toBe(400);
    const paths = ((await bad.json()).error.details as { path: string }[]).map((d) => d.path).sort();
    expect(paths).toEqual(['actor', 'from']);
    const reversed = await list('?from=2026-02-01&to=2026-01-01');
    expect(reversed.status).toBe(400);
    expect((await reversed.json()).error.details).toEqual([{ path: 'to', message: 'The end date comes before the start date.' }]);
    const page = await clients.auditor.request('GET', `/initiatives/${initiativeId}/audit?from=2026-02-01&to=2026-01-01`);
    expect(page.status).toBe(400);
    expect(await page.text()).toContain('The end date comes before the start date.');
  });
});

describe('exporting the trail', () => {
  it('as CSV: caution first, chain order, neutralised text, and an audit event', async () => {
    const response = await clients.auditor.request('GET', `/api/initiatives/${initiativeId}/audit-events/export?format=csv&action=run`);
    expect(response.status).toBe(200);
    expect(response.headers.get('content-disposition')).toMatch(/^attachment; filename="crossgrain-audit-[0-9a-f]{8}-\d{4}-\d{2}-\d{2}\.csv"$/);
    const records = parse(await response.text(), { relax_column_count: false }) as string[][];
    expect(records[0]).toEqual(['Caution', STANDING_CAUTION, ...Array(10).fill('')]);
    expect(records.find((r) => r[0] === 'Filter')?.[1]).toBe('action run');
    const header = records.findIndex((r) => r[0] === 'position');
    const rows = records.slice(header + 1);
    expect(rows).toHaveLength(11);
    const positions = rows.map((r) => Number(r[0]));
    expect(positions).toEqual([...positions].sort((a, b) => a - b));

    const everything = parse(await (await clients.auditor.request('GET', `/api/initiatives/${initiativeId}/audit-events/export?format=csv`)).text()) as string[][];
    const created = everything.find((r) => r[5] === 'analysis.created')!;
    expect(created[7]).toBe("'=cmd|calc");
    expect(JSON.parse(created[9])).toEqual({ title: 'By age band' });

    const [event] = await ownerDb().query<{ details: Record<string, unknown> }>(
      "SELECT details FROM audit_events WHERE action = 'audit.exported' AND initiative_id = :id ORDER BY chain_position LIMIT 1",
      { replacements: { id: initiativeId }, type: QueryTypes.SELECT },
    );
    expect(event.details).toMatchObject({ format: 'csv', filter: { action: 'run' }, count: 11 });
  });

  it('as JSON, with the caution and every event’s hashes', async () => {
    const body = await (await clients.auditor.request('GET', `/api/initiatives/${initiativeId}/audit-events/export?format=json&action=run.finished`)).json();
    expect(body.caution).toBe(STANDING_CAUTION);
    expect(body.count).toBe(5);
    expect(body.events.every((e: { hash: string; prevHash: string }) => /^[0-9a-f]{64}$/.test(e.hash) && /^[0-9a-f]{64}$/.test(e.prevHash))).toBe(true);
  });
});

describe('the trail outside initiatives (administrators)', () => {
  it('lists and exports sign-ins and account events for administrators only', async () => {
    const admin = await makeUser({ passwordHash: await hashPassword(password), isAdmin: true });
    const client = new ApiClient();
    expect((await client.signIn(admin.email, password)).status).toBe(204);
    const mine = await (await client.request('GET', `/api/admin/audit-events?action=auth.sign-in&actor=${admin.id}`)).json();
    expect(mine.total).toBe(1);
    expect(mine.events[0]).toMatchObject({ action: 'auth.sign-in', actor: { id: admin.id } });
    const auth = await (await client.request('GET', '/api/admin/audit-events?action=auth&pageSize=200')).json();
    expect(auth.events.length).toBeGreaterThan(0);
    expect(auth.events.every((e: { action: string }) => e.action.startsWith('auth.'))).toBe(true);
    // Nothing from inside an initiative appears here.
    expect((await (await client.request('GET', '/api/admin/audit-events?action=run')).json()).total).toBe(0);

    expect((await clients.auditor.request('GET', '/api/admin/audit-events')).status).toBe(403);
    expect((await clients.auditor.request('GET', '/admin/audit')).status).toBe(404);
    const page = await client.request('GET', '/admin/audit?action=auth');
    expect(page.status).toBe(200);
    expect(await page.text()).toContain('Account events');

    const csv = parse(await (await client.request('GET', `/api/admin/audit-events/export?format=csv&actor=${admin.id}`)).text(), { relax_column_count: false }) as string[][];
    expect(csv[0]).toEqual(['Caution', STANDING_CAUTION, ...Array(10).fill('')]);
    const header = csv.findIndex((r) => r[0] === 'position');
    expect(csv.slice(header + 1).map((r) => r[5])).toContain('auth.sign-in');
    const [exported] = await ownerDb().query<{ details: Record<string, unknown> }>(
      "SELECT details FROM audit_events WHERE action = 'audit.exported' AND actor_id = :id", { replacements: { id: admin.id }, type: QueryTypes.SELECT },
    );
    expect(exported.details).toMatchObject({ scope: 'outside initiatives', format: 'csv' });
  });
});
