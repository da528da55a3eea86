/**
 * A finished run's results page and the review board are kept whole in the server's
 * memory (lib/server/pageCache.ts) under the initiative's counter and the viewer. These
 * checks make changes the kept pages do not see happen (other endpoints, other processes,
 * plain SQL) and read the page again: it must show the change at once, each viewer must get
 * their own page, and someone who lost access must get nothing.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { generateCallBackCohort } from '@/features/extracts/demoCohorts';
import { startServer, type ServerHandle } from '../browser/harness';
import { makeReadyExtract } from '../support/extractFactory';
import { closeOwnerDb, makeInitiative, ownerDb } from '../support/factories';
import type { ApiClient } from '../support/http';
import { signedInMembers } from '../support/members';
import { finishedRunOverHttp } from '../support/runs';

const password = 'copper-heron-lattice';
let server: ServerHandle;
let initiativeId: string;
let runId: string;
let analysisId: string;
let clients: Record<'analyst' | 'clinician' | 'auditor', ApiClient>;
let ids: Record<'analyst' | 'clinician' | 'auditor', string>;

const page = async (client: ApiClient, path: string) => {
  const response = await client.request('GET', path);
  return { status: response.status, html: await response.text() };
};
const resultsPage = (client: ApiClient) => page(client, `/runs/${runId}`);
const board = (client: ApiClient) => page(client, `/initiatives/${initiativeId}/board`);
const reviewBadge = (html: string) => html.match(/data-testid="review-state-top"[^>]*>([^<]*)</)?.[1];

beforeAll(async () => {
  server = await startServer();
  initiativeId = (await makeInitiative('Kept pages ward')).id;
  ({ ids, clients } = await signedInMembers(password, [
    ['analyst', initiativeId, 'analyst'], ['clinician', initiativeId, 'clinician'], ['auditor', initiativeId, 'auditor'],
  ] as const));
  const versionId = (await makeReadyExtract(ids.analyst, initiativeId, generateCallBackCohort({ rows: 400 }).csv)).versionId;
  const spec = {
    outcome: { column: 'readmitted_30d', type: 'binary' }, exposure: { column: 'call_back', reference: '0' },
    modifier: { column: 'sex', type: 'categorical', reference: 'F' }, covariates: [], model: 'logistic', ci: { level: 0.95, method: 'delta' },
  };
  ({ analysisId, runId } = await finishedRunOverHttp(clients.analyst, ids.analyst, {
    initiativeId, extractVersionId: versionId, title: 'Call-back by sex', question: 'Does the call-back help men more?', spec,
  }));
}, 120_000);

afterAll(async () => {
  await server?.close();
  await closeOwnerDb();
});

describe('a kept results page and board', () => {
  it('are served again from memory while nothing they show changes', async () => {
    const first = await resultsPage(clients.analyst);
    expect(first.status).toBe(200);
    expect(first.html).toContain('Call-back by sex');
    await board(clients.analyst);
    // A change made with the counter's triggers switched off is invisible to the kept pages,
    // which shows they are kept (the triggers are on again before anything else happens).
    await ownerDb().query(
      `BEGIN; ALTER TABLE analyses DISABLE TRIGGER analyses_move_initiative_stamp;
       UPDATE analyses SET title = 'Renamed quietly' WHERE id = '${analysisId}';
       ALTER TABLE analyses ENABLE TRIGGER analyses_move_initiative_stamp; COMMIT;`,
    );
    expect((await resultsPage(clients.analyst)).html).toContain('Call-back by sex');
    expect((await board(clients.analyst)).html).toContain('Call-back by sex');
    // Any change that moves the counter brings the pages up to date.
    await ownerDb().query(`UPDATE analyses SET title = 'Call-back by sex, renamed' WHERE id = '${analysisId}'`);
    expect((await resultsPage(clients.analyst)).html).toContain('Call-back by sex, renamed');
    expect((await board(clients.analyst)).html).toContain('Call-back by sex, renamed');
  });

  it('show a review step taken through the API on the next view', async () => {
    expect(reviewBadge((await resultsPage(clients.clinician)).html)).toBe('Draft');
    expect((await clients.analyst.request('POST', `/api/runs/${runId}/review/submit`, {})).status).toBe(200);
    expect(reviewBadge((await resultsPage(clients.clinician)).html)).toBe('Submitted for review');
    expect(reviewBadge((await resultsPage(clients.analyst)).html)).toBe('Submitted for review');
  });

  it('show a new name of the person who ran it on the next view', async () => {
    await ownerDb().query(`UPDATE users SET display_name = 'Dr Quill Renamed' WHERE id = '${ids.analyst}'`);
    expect((await resultsPage(clients.auditor)).html).toContain('run by Dr Quill Renamed');
  });

  it('give each viewer their own page', async () => {
    for (let i = 0; i < 2; i += 1) {
      expect((await resultsPage(clients.clinician)).html).toContain('Save the ratings');
      expect((await resultsPage(clients.auditor)).html).not.toContain('Save the ratings');
    }
  });

  it('are not served to someone who has left the initiative', async () => {
    expect((await resultsPage(clients.auditor)).status).toBe(200);
    expect((await board(clients.auditor)).status).toBe(200);
    await ownerDb().query(`DELETE FROM memberships WHERE user_id = '${ids.auditor}' AND initiative_id = '${initiativeId}'`);
    expect((await resultsPage(clients.auditor)).status).toBe(404);
    expect((await board(clients.auditor)).status).toBe(404);
  });

  it('carry a new script nonce on every response', async () => {
    const nonces = await Promise.all([0, 1].map(async () => (await resultsPage(clients.analyst)).html.match(/<script nonce=([0-9a-f]+)/)?.[1]));
    expect(nonces[0]).toBeTruthy();
    expect(nonces[0]).not.toBe(nonces[1]);
  });
});
