/**
 * The privacy regime over HTTP: the test server runs with CROSSGRAIN_PRIVACY_REGIME=uk
 * (scripts/lib/testEnv.mjs), so an upload holding NHS numbers is refused with the UK
 * wording, the refusal and its audit event name the regime, a column of plain 5-digit
 * numbers is not read as ZIP codes, and the upload help and the de-identification
 * statement cite the UK rules, not HIPAA.
 * Standards: ICO anonymisation guidance; NHS Data Dictionary, "NHS Number" (check digit).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { QueryTypes } from 'sequelize';
import { hashPassword } from '@/lib/server/passwords';
import { SESSION_COOKIE } from '@/lib/server/session';
import { startServer, type ServerHandle } from '../browser/harness';
import { addMember, closeOwnerDb, makeInitiative, makeUser, ownerDb } from '../support/factories';
import { ApiClient } from '../support/http';
import { dataCounts, streamUpload } from '../support/upload';

const password = 'heron-saltmarsh-lantern';
let server: ServerHandle;
let initiativeId: string;
let analyst: ApiClient;

beforeAll(async () => {
  server = await startServer();
  initiativeId = (await makeInitiative('Regime ward')).id;
  const user = await makeUser({ passwordHash: await hashPassword(password) });
  await addMember(initiativeId, user.id, 'analyst');
  analyst = new ApiClient();
  expect((await analyst.signIn(user.email, password)).status).toBe(204);
});

afterAll(async () => {
  await server?.close();
  await closeOwnerDb();
});

function upload(name: string, body: string) {
  return streamUpload(`/api/initiatives/${initiativeId}/extracts?name=${encodeURIComponent(name)}`, [body], {
    Cookie: `${SESSION_COOKIE}=${analyst.cookie(SESSION_COOKIE)}`,
  });
}

async function settled(extractId: string) {
  for (let i = 0; i < 100; i += 1) {
    const response = await analyst.request('GET', `/api/extracts/${extractId}`);
    const body = await response.json();
    if (response.status === 200 && body.versions[0].status !== 'processing') return body;
    await new Promise((resolve) => setTimeout(resolve, 100));
  }
  throw new Error('the upload did not settle');
}

// 943 476 5919 is NHS Digital's published example NHS number; 401 023 2137 and 450 557 7104
// pass the same modulus-11 check (by hand). Three values over 30 rows: the near-unique rule stays quiet.
const nhsNumbers = ['9434765919', '4010232137', '4505577104'];

describe('an upload under the UK regime', () => {
  it('refuses NHS numbers with the UK wording, keeping only the reasons, and names the regime', async () => {
    const before = await dataCounts();
    const csv = `nhs_number,y\n${Array.from({ length: 30 }, (_, i) => `${nhsNumbers[i % 3]},${i % 2}`).join('\n')}`;
    const response = await upload('With NHS numbers', csv);
    expect(response.status).toBe(202);
    const { extractId } = JSON.parse(response.body);
    const version = (await settled(extractId)).versions[0];
    expect(version.status).toBe('refused');
    expect(version.reasons).toHaveLength(1);
    expect(version.reasons[0]).toMatchObject({ column: 'nhs_number', rules: ['column-name', 'nhs-number-pattern'], regime: 'uk' });
    expect(version.reasons[0].message).toBe(
      'Column "nhs_number" may identify people: its name suggests NHS numbers, an identifier under the ICO\'s anonymisation guidance; ' +
        '30 values of 30 examined look like NHS numbers (their check digit holds). Remove the column (or drop it while uploading) and upload again.',
    );
    expect(JSON.stringify(version.reasons)).not.toMatch(/Safe Harbor|HIPAA|9434765919/);
    expect(await dataCounts()).toEqual(before);
    const [event] = await ownerDb().query<{ action: string; details: { privacyRegime: string } }>(
      'SELECT action, details FROM audit_events WHERE subject_id = :id ORDER BY chain_position', { replacements: { id: extractId }, type: QueryTypes.SELECT },
    );
    expect(event).toMatchObject({ action: 'extract.upload-refused', details: { privacyRegime: 'uk' } });
  });

  it('reads plain 5-digit numbers as numbers, not ZIP codes, and signs the UK statement', async () => {
    const csv = `ward_code,y\n${Array.from({ length: 30 }, (_, i) => `${10200 + (i % 3)},${i % 2}`).join('\n')}`;
    const response = await upload('Ward codes', csv);
    const { extractId, versionId } = JSON.parse(response.body);
    const version = (await settled(extractId)).versions[0];
    expect(version.status).toBe('needs-review');
    const confirm = await analyst.request('POST', `/api/extracts/${extractId}/versions/${versionId}/confirm`, { attestation: { signedName: 'Test Analyst' } });
    expect(confirm.status).toBe(204);
    const ready = (await (await analyst.request('GET', `/api/extracts/${extractId}`)).json()).versions[0];
    expect(ready.attestation).toMatchObject({ regime: 'uk' });
    expect(ready.attestation.statement).toMatch(/ICO's anonymisation guidance/);
    expect(ready.attestation.statement).not.toMatch(/164\.514|Safe Harbor|state/);
    const events = await ownerDb().query<{ action: string; details: { privacyRegime: string } }>(
      'SELECT action, details FROM audit_events WHERE subject_id = :id ORDER BY chain_position', { replacements: { id: extractId }, type: QueryTypes.SELECT },
    );
    expect(events.map((e) => [e.action, e.details.privacyRegime])).toEqual([['extract.uploaded', 'uk'], ['extract.confirmed', 'uk']]);
  });

  it('shows the UK examples in the upload help', async () => {
    const page = await analyst.request('GET', `/initiatives/${initiativeId}/extracts`);
    expect(page.status).toBe(200);
    const html = await page.text();
    expect(html).toContain('NHS numbers, National Insurance numbers, full postcodes');
    expect(html).not.toMatch(/ZIP codes|164\.514/);
  });
});
