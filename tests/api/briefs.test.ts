/**
 * Briefs over HTTP (product brief, step 6; issue "Briefs"): an analyst drafts a brief only
 * from a signed-off run, edits it while it is a draft, publishes it as an immutable
 * version, corrects it with a note, retracts it with a reason; clinicians and auditors
 * read it and download its PDF; non-members get 404. The PDF is read back with poppler's
 * pdftotext and pdffonts: the caution is on every page, Noto Sans is embedded, and on an
 * extract with a stratum of nine people no count from 1 to 10 is printed. Bad input gets
 * a clear message and changes nothing. Distribution e-mails the PDF to the fake mail server.
 */
import { execFileSync } from 'node:child_process';
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { QueryTypes } from 'sequelize';
import { smallStratumCsv } from '@/features/briefs/briefTestSupport';
import { executeRun } from '@/features/runs/executeRun';
import { STANDING_CAUTION } from '@/lib/cautions';
import { listMessages, readMessage } from '@/features/admin/outbox';
import { hashPassword } from '@/lib/server/passwords';
import { mailDir, startServer, type ServerHandle } from '../browser/harness';
import { makeReadyExtract } from '../support/extractFactory';
import { addMember, closeOwnerDb, makeInitiative, makeUser, ownerDb } from '../support/factories';
import { ApiClient } from '../support/http';

const password = 'heron-sluice-lantern';
let server: ServerHandle;
let initiativeId: string;
let signedRunId: string;
let unsignedRunId: string;
let briefId: string;
const ids: Record<string, string> = {};
const clients = new Map<'analyst' | 'clinician' | 'auditor' | 'outsider', ApiClient>();
const client = (role: 'analyst' | 'clinician' | 'auditor' | 'outsider') => clients.get(role)!;

const SPEC = {
  outcome: { column: 'readmitted_30d', type: 'binary' }, exposure: { column: 'call_back', reference: '0' },
  modifier: { column: 'age_band', type: 'categorical', reference: '18-44' }, covariates: [{ column: 'sex', type: 'categorical', reference: 'F' }],
  model: 'logistic', ci: { level: 0.95, method: 'delta' },
};

async function finishedRun(analysisId: string): Promise<string> {
  const runId = (await (await client('analyst').request('POST', `/api/analyses/${analysisId}/runs`, {})).json()).runId;
  expect(await executeRun(runId, ids.analyst, { threads: 0 })).toBe('succeeded');
  return runId;
}

async function briefRows(): Promise<{ briefs: number; versions: number; deliveries: number }> {
  const [row] = await ownerDb().query<{ briefs: string; versions: string; deliveries: string }>(
    `SELECT (SELECT count(*) FROM briefs WHERE initiative_id = :id) AS briefs, (SELECT count(*) FROM brief_versions WHERE initiative_id = :id) AS versions,
            (SELECT count(*) FROM brief_deliveries WHERE initiative_id = :id) AS deliveries`,
    { replacements: { id: initiativeId }, type: QueryTypes.SELECT },
  );
  return { briefs: Number(row.briefs), versions: Number(row.versions), deliveries: Number(row.deliveries) };
}

function pdfTools(pdf: Buffer): { text: string; fonts: string; info: string } {
  const dir = mkdtempSync(path.join(tmpdir(), 'brief-'));
  const file = path.join(dir, 'brief.pdf');
  writeFileSync(file, pdf);
  const run = (tool: string, args: string[]) => execFileSync(tool, [...args, file, ...(tool === 'pdftotext' ? ['-'] : [])], { encoding: 'utf8' });
  return { text: run('pdftotext', ['-layout']), fonts: run('pdffonts', []), info: run('pdfinfo', []) };
}

beforeAll(async () => {
  server = await startServer();
  const hash = await hashPassword(password);
  initiativeId = (await makeInitiative('Brief ward')).id;
  const other = (await makeInitiative('Other brief ward')).id;
  for (const [role, where] of [['analyst', initiativeId], ['clinician', initiativeId], ['auditor', initiativeId], ['outsider', other]] as const) {
    const user = await makeUser({ passwordHash: hash });
    await addMember(where, user.id, role === 'outsider' ? 'analyst' : role);
    ids[role] = user.id;
    const api = new ApiClient();
    expect((await api.signIn(user.email, password)).status).toBe(204);
    clients.set(role, api);
  }
  const { versionId } = await makeReadyExtract(ids.analyst, initiativeId, smallStratumCsv());
  const created = await client('analyst').request('POST', '/api/analyses', {
    initiativeId, extractVersionId: versionId, title: 'Call-back by age band', question: 'Does the call-back help older patients more?', prespecified: true, spec: SPEC,
  });
  const analysisId = (await created.json()).id;
  signedRunId = await finishedRun(analysisId);
  unsignedRunId = await finishedRun(analysisId);
  expect((await client('analyst').request('POST', `/api/runs/${signedRunId}/review/submit`, {})).status).toBe(200);
  const decision = await client('clinician').request('POST', `/api/runs/${signedRunId}/review/decision`, {
    // The brief states the signature's meaning (typed in the signer's own words here), not the note.
    decision: 'sign-off', note: 'See the thread on the 80+ stratum.', meaning: 'Numbers and methods checked against the protocol.', password,
  });
  expect(decision.status).toBe(200);
}, 120_000);

afterAll(async () => {
  await server?.close();
  await closeOwnerDb();
});

describe('drafting', () => {
  it('refuses a run that is not signed off, saying so, and changes nothing', async () => {
    const before = await briefRows();
    const response = await client('analyst').request('POST', `/api/runs/${unsignedRunId}/briefs`, { title: 'Too early', summary: 'Not yet.' });
    expect(response.status).toBe(409);
    expect((await response.json()).error.message).toMatch(/not signed off/);
    expect(await briefRows()).toEqual(before);
  });

  it('refuses an empty title with a clear message and changes nothing', async () => {
    const before = await briefRows();
    const response = await client('analyst').request('POST', `/api/runs/${signedRunId}/briefs`, { title: '   ', summary: 'Something.' });
    expect(response.status).toBe(400);
    expect(JSON.stringify(await response.json())).toContain('Give the brief a title.');
    expect(await briefRows()).toEqual(before);
  });

  it('is for analysts of the initiative only', async () => {
    for (const role of ['clinician', 'auditor'] as const) {
      expect((await client(role).request('POST', `/api/runs/${signedRunId}/briefs`, { title: 'T', summary: 'S' })).status, role).toBe(403);
    }
    expect((await client('outsider').request('POST', `/api/runs/${signedRunId}/briefs`, { title: 'T', summary: 'S' })).status).toBe(404);
  });

  it('drafts from the signed-off run and edits the draft', async () => {
    const response = await client('analyst').request('POST', `/api/runs/${signedRunId}/briefs`, { title: 'Call-back and age', summary: 'The call-back seems to help older patients more.' });
    expect(response.status).toBe(201);
    briefId = (await response.json()).id;
    const patched = await client('analyst').request('PATCH', `/api/briefs/${briefId}`, { ownCautions: ['Site B changed its call script in May.'] });
    expect(patched.status).toBe(200);
    expect((await patched.json()).ownCautions).toEqual(['Site B changed its call script in May.']);
    const page = await (await client('analyst').request('GET', `/briefs/${briefId}`)).text();
    expect(page).toContain('draft preview, not published');
    expect(page).toContain('&lt;11');
    expect(page).toContain('Numbers and methods checked against the protocol.');
  });
});

describe('publishing and reading', () => {
  it('publishes version 1, and the draft can no longer be edited', async () => {
    const response = await client('analyst').request('POST', `/api/briefs/${briefId}/publish`, {});
    expect(response.status).toBe(200);
    expect(await response.json()).toEqual({ version: 1 });
    expect((await client('analyst').request('PATCH', `/api/briefs/${briefId}`, { title: 'Changed' })).status).toBe(409);
    expect((await client('analyst').request('POST', `/api/briefs/${briefId}/publish`, {})).status).toBe(409);
  });

  it('lets clinicians and auditors read it and hides it from non-members', async () => {
    for (const role of ['clinician', 'auditor'] as const) {
      const view = await client(role).request('GET', `/api/briefs/${briefId}`);
      expect(view.status, role).toBe(200);
      const body = await view.json();
      expect(body.versions).toHaveLength(1);
      // The analysis was run again after the signed-off run: the brief says so and stays as it was.
      expect(body.newerWork).toEqual(["The analysis has been run once since this brief's run."]);
      expect((await client(role).request('GET', `/briefs/${briefId}`)).status, role).toBe(200);
    }
    expect((await client('outsider').request('GET', `/api/briefs/${briefId}`)).status).toBe(404);
    expect((await client('outsider').request('GET', `/briefs/${briefId}`)).status).toBe(404);
    expect((await client('outsider').request('GET', `/api/briefs/${briefId}/pdf`)).status).toBe(404);
  });

  it('serves a PDF with the caution on every page, Noto Sans embedded and no count from 1 to 10', async () => {
    const response = await client('clinician').request('GET', `/api/briefs/${briefId}/pdf`);
    expect(response.status).toBe(200);
    expect(response.headers.get('content-type')).toBe('application/pdf');
    const { text, fonts, info } = pdfTools(Buffer.from(await response.arrayBuffer()));
    // Document metadata and the initiative's default paper size (A4 is 595.28 x 841.89 pt).
    expect(info).toMatch(/^Title:\s+Call-back and age$/m);
    expect(info).toMatch(/^Author:\s+\S/m);
    expect(info).toMatch(/^CreationDate:\s+\S/m);
    expect(info).toMatch(/^Page size:\s+595\.28 x 841\.89 pts \(A4\)/m);
    const pages = text.split('\f').filter((page) => page.trim().length > 0);
    expect(pages.length).toBeGreaterThan(0);
    for (const page of pages) expect(page.replace(/\s+/g, ' ')).toContain(STANDING_CAUTION.slice(0, 60));
    expect(fonts).toMatch(/\+NotoSans-Regular\s+CID TrueType\s+Identity-H\s+yes/);
    expect(fonts).toMatch(/\+NotoSans-Bold/);
    const flat = text.replace(/\s+/g, ' ');
    expect(flat).toContain('90+');
    expect(flat).toContain('<11');
    // Counts of people, rows or events in sentences: none from 1 to 10 (the policy's threshold 11).
    for (const match of flat.matchAll(/(?<![\d.,<])(\d{1,3}(?:,\d{3})*) (people|rows|events)/g)) {
      const value = Number(match[1].replaceAll(',', ''));
      expect(value === 0 || value >= 11, match[0]).toBe(true);
    }
  });

  it('shows the brief on the Briefs tab, the board and the run page', async () => {
    expect(await (await client('auditor').request('GET', `/initiatives/${initiativeId}/briefs`)).text()).toContain('Call-back and age');
    expect(await (await client('clinician').request('GET', `/initiatives/${initiativeId}/board`)).text()).toContain('data-testid="board-published"');
    expect(await (await client('clinician').request('GET', `/runs/${signedRunId}`)).text()).toContain(`/briefs/${briefId}`);
  });
});

describe('corrections, distribution and retraction', () => {
  it('refuses a correction without a note and changes nothing', async () => {
    const before = await briefRows();
    const response = await client('analyst').request('POST', `/api/briefs/${briefId}/corrections`, { note: ' ', summary: 'Other words.' });
    expect(response.status).toBe(400);
    expect(JSON.stringify(await response.json())).toContain('Say what changed');
    expect(await briefRows()).toEqual(before);
  });

  it('refuses a bad setting and changes nothing', async () => {
    const response = await client('analyst').request('PUT', `/api/initiatives/${initiativeId}/brief-settings`, { cellThreshold: 1, pageSize: 'A4' });
    expect(response.status).toBe(400);
    expect(JSON.stringify(await response.json())).toContain('The threshold is at least 2.');
    expect(await (await client('auditor').request('GET', `/api/initiatives/${initiativeId}/brief-settings`)).json()).toEqual({ cellThreshold: 11, pageSize: 'A4' });
    expect((await client('clinician').request('PUT', `/api/initiatives/${initiativeId}/brief-settings`, { cellThreshold: 11, pageSize: 'LETTER' })).status).toBe(403);
  });

  it('publishes a correction as version 2 (on US Letter, the new setting) and keeps version 1', async () => {
    expect((await client('analyst').request('PUT', `/api/initiatives/${initiativeId}/brief-settings`, { cellThreshold: 11, pageSize: 'LETTER' })).status).toBe(200);
    const response = await client('analyst').request('POST', `/api/briefs/${briefId}/corrections`, { note: 'Summary reworded.', summary: 'The call-back may help older patients more.' });
    expect(response.status).toBe(201);
    expect(await response.json()).toEqual({ version: 2 });
    const first = pdfTools(Buffer.from(await (await client('auditor').request('GET', `/api/briefs/${briefId}/pdf?version=1`)).arrayBuffer()));
    expect(first.text).toContain('seems to help');
    expect(first.info).toMatch(/\(A4\)/);
    const second = pdfTools(Buffer.from(await (await client('auditor').request('GET', `/api/briefs/${briefId}/pdf`)).arrayBuffer()));
    expect(second.text).toContain('may help');
    expect(second.info).toMatch(/^Page size:\s+612 x 792 pts \(letter\)/m);
    const page = await (await client('auditor').request('GET', `/briefs/${briefId}`)).text();
    expect(page).toContain('Summary reworded.');
  });

  it('refuses a bad e-mail address and sends nothing', async () => {
    const before = await briefRows();
    const response = await client('analyst').request('POST', `/api/briefs/${briefId}/distribution`, { recipients: ['not-an-address'] });
    expect(response.status).toBe(400);
    expect(JSON.stringify(await response.json())).toContain('valid e-mail address');
    expect(await briefRows()).toEqual(before);
  });

  it('e-mails the PDF to the list and the added recipients, and audits each', async () => {
    const added = await client('analyst').request('POST', `/api/initiatives/${initiativeId}/brief-recipients`, { name: 'Quality lead', email: 'quality.lead@tern-valley.example' });
    expect(added.status).toBe(201);
    const response = await client('analyst').request('POST', `/api/briefs/${briefId}/distribution`, { recipients: ['ward.manager@tern-valley.example'] });
    expect(response.status).toBe(202);
    expect((await response.json()).recipients).toBe(2);
    const listing = await listMessages({ dir: mailDir, pageSize: 100 });
    const mine = listing.messages.filter((m) => m.subject.includes('Call-back and age'));
    const toWard = mine.find((m) => m.to.includes('ward.manager@tern-valley.example'));
    expect(toWard).toBeDefined();
    const message = await readMessage(toWard!.id, { dir: mailDir });
    expect(message.attachments).toEqual([expect.objectContaining({ filename: expect.stringMatching(/-v2\.pdf$/), contentType: 'application/pdf' })]);
    expect(message.links.some((link) => link.endsWith(`/briefs/${briefId}`))).toBe(true);
    const [audit] = await ownerDb().query<{ n: string }>(
      "SELECT count(*) AS n FROM audit_events WHERE action = 'brief.distributed' AND subject_id = :id", { replacements: { id: briefId }, type: QueryTypes.SELECT },
    );
    expect(Number(audit.n)).toBe(3); // two recipients and the send
  });

  it('retracts with a reason, marking every copy, and keeps the record', async () => {
    expect((await client('analyst').request('POST', `/api/briefs/${briefId}/retraction`, { reason: '' })).status).toBe(400);
    const response = await client('analyst').request('POST', `/api/briefs/${briefId}/retraction`, { reason: 'The extract double-counted one site.' });
    expect(response.status).toBe(200);
    expect((await response.json()).state).toBe('retracted');
    for (const version of [1, 2]) {
      const { text } = pdfTools(Buffer.from(await (await client('auditor').request('GET', `/api/briefs/${briefId}/pdf?version=${version}`)).arrayBuffer()));
      expect(text).toContain('RETRACTED');
      expect(text.replace(/\s+/g, ' ')).toContain('double-counted one site');
    }
    expect(await (await client('clinician').request('GET', `/briefs/${briefId}?version=1`)).text()).toContain('data-testid="brief-retracted"');
    expect((await client('analyst').request('POST', `/api/briefs/${briefId}/distribution`, {})).status).toBe(409);
    const actions = await ownerDb().query<{ action: string }>(
      'SELECT DISTINCT action FROM audit_events WHERE subject_id = :id', { replacements: { id: briefId }, type: QueryTypes.SELECT },
    );
    expect(actions.map((a) => a.action).sort()).toEqual(['brief.corrected', 'brief.distributed', 'brief.downloaded', 'brief.drafted', 'brief.published', 'brief.retracted']);
  });

  it('refuses to change a published snapshot even below the API', async () => {
    await expect(ownerDb().query("UPDATE brief_versions SET html = 'changed' WHERE brief_id = :id", { replacements: { id: briefId } })).rejects.toThrow(/cannot be changed/);
  });
});
