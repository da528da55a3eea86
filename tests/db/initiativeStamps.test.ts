/**
 * The initiatives' counters (migration add-initiative-stamps): the triggers move an
 * initiative's counter in the transaction of every change to a record its pages show, and
 * not on a run's heartbeat or progress report; a number taken by a rolled-back change is
 * never given again. Credibility items, plan standings and whole finished-run and board
 * pages are kept in memory under the counter, so a change that did not move it would leave
 * a page behind its records.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { QueryTypes } from 'sequelize';
import { generateCallBackCohort } from '@/features/extracts/demoCohorts';
import { sequelize, withIdentity } from '@/lib/server/db';
import { initiativeStamp, StampedCache } from '@/lib/server/initiativeStamp';
import { makeReadyExtract } from '../support/extractFactory';
import { addMember, closeOwnerDb, makeInitiative, makeUser, ownerDb } from '../support/factories';

let initiativeId: string;
let otherId: string;
let analystId: string;
let versionId: string;
let analysisId: string;
let runId: string;

const stampOf = async (id = initiativeId) =>
  (await ownerDb().query<{ stamp: string }>('SELECT stamp FROM initiative_stamps WHERE initiative_id = :id', { replacements: { id }, type: QueryTypes.SELECT }))[0]?.stamp ?? '0';
/** Whether `change` (owner SQL) moves the initiative's counter. */
const moves = async (sql: string, replacements: Record<string, unknown> = {}) => {
  const before = await stampOf();
  await ownerDb().query(sql, { replacements: { initiativeId, analystId, versionId, analysisId, runId, ...replacements } });
  return (await stampOf()) !== before;
};

beforeAll(async () => {
  initiativeId = (await makeInitiative('Evidence ward')).id;
  otherId = (await makeInitiative('Other evidence ward')).id;
  analystId = (await makeUser()).id;
  await addMember(initiativeId, analystId, 'analyst');
  versionId = (await makeReadyExtract(analystId, initiativeId, generateCallBackCohort({ rows: 200 }).csv)).versionId;
  const spec = { outcome: { column: 'readmitted_30d', type: 'binary' }, exposure: { column: 'call_back', reference: '0' }, modifier: { column: 'sex', type: 'categorical', reference: 'F' }, covariates: [], model: 'logistic', ci: { level: 0.95, method: 'delta' } };
  [{ id: analysisId }] = await ownerDb().query<{ id: string }>(
    `INSERT INTO analyses (id, initiative_id, extract_version_id, title, question, prespecified, spec, created_by, updated_by)
     VALUES (gen_random_uuid(), :initiativeId, :versionId, 'Stamps', 'Does it differ?', false, :spec, :analystId, :analystId) RETURNING id`,
    { replacements: { initiativeId, versionId, analystId, spec: JSON.stringify(spec) }, type: QueryTypes.SELECT },
  );
}, 120_000);

afterAll(async () => {
  await closeOwnerDb();
});

describe('the counter of an initiative', () => {
  it('moves when a run is added or its status changes, not on a heartbeat or a progress report', async () => {
    const before = await stampOf();
    [{ id: runId }] = await ownerDb().query<{ id: string }>(
      `INSERT INTO runs (id, analysis_id, initiative_id, extract_version_id, status, spec, spec_hash, extract_sha256, started_by, exploratory, caution_text, caution_version)
       SELECT gen_random_uuid(), a.id, a.initiative_id, a.extract_version_id, 'queued', a.spec, repeat('a', 64), v.sha256, :analystId, true, 'Exploratory.', 'v1'
         FROM analyses a JOIN extract_versions v ON v.id = a.extract_version_id WHERE a.id = :analysisId RETURNING id`,
      { replacements: { analysisId, analystId }, type: QueryTypes.SELECT },
    );
    expect(await stampOf()).not.toBe(before);
    expect(await moves("UPDATE runs SET status = 'running', started_at = now(), heartbeat_at = now() WHERE id = :runId")).toBe(true);
    expect(await moves('UPDATE runs SET heartbeat_at = now() WHERE id = :runId')).toBe(false);
    expect(await moves(`UPDATE runs SET progress = '{"stage": "fit", "fraction": 0.5}' WHERE id = :runId`)).toBe(false);
    expect(await moves("UPDATE runs SET status = 'failed', finished_at = now(), error = '{\"code\": \"x\", \"message\": \"x\"}' WHERE id = :runId")).toBe(true);
  });

  it('moves when an analysis changes, when the register or the plans change, and when a rating changes', async () => {
    expect(await moves('UPDATE analyses SET prespecified = true, prespecified_at = now() WHERE id = :analysisId')).toBe(true);
    expect(await moves('UPDATE analyses SET title = :title WHERE id = :analysisId', { title: 'Stamps, renamed' })).toBe(true);
    expect(await moves(
      `INSERT INTO prespecified_modifiers (initiative_id, modifier_column, outcome_column, direction, where_text, rationale, registered_by)
       VALUES (:initiativeId, 'sex', '', 'none', '', 'Seen before.', :analystId)`,
    )).toBe(true);
    expect(await moves("UPDATE prespecified_modifiers SET withdrawn_at = now(), withdrawn_by = :analystId, withdrawal_reason = 'x' WHERE initiative_id = :initiativeId")).toBe(true);
    expect(await moves(`INSERT INTO interaction_plans (initiative_id, inputs, figures, saved_by) VALUES (:initiativeId, '{}', '{}', :analystId)`)).toBe(true);
    expect(await moves(
      `INSERT INTO credibility_ratings (run_id, initiative_id, rationale, prior_evidence, rated_by) VALUES (:runId, :initiativeId, 'weak', 'mixed', :analystId)`,
    )).toBe(true);
    expect(await moves("UPDATE credibility_ratings SET rationale = 'strong' WHERE run_id = :runId")).toBe(true);
  });

  it('moves on a comment, a member added, a member renamed and the initiative renamed; a new initiative has its counter', async () => {
    expect(await moves("INSERT INTO run_comments (run_id, initiative_id, author_id, body) VALUES (:runId, :initiativeId, :analystId, 'Looks odd.')")).toBe(true);
    const newcomer = (await makeUser()).id;
    expect(await moves("INSERT INTO memberships (initiative_id, user_id, role) VALUES (:initiativeId, :newcomer, 'auditor')", { newcomer })).toBe(true);
    expect(await moves("UPDATE users SET display_name = 'Renamed Person' WHERE id = :newcomer", { newcomer })).toBe(true);
    expect(await moves("UPDATE users SET display_name = 'Not A Member' WHERE id = :outsider", { outsider: (await makeUser()).id })).toBe(false);
    expect(await moves("UPDATE initiatives SET description = 'Renamed ward' WHERE id = :initiativeId")).toBe(true);
    const fresh = (await makeInitiative('Fresh ward')).id;
    expect(await stampOf(fresh)).not.toBe('0');
  });

  it('is not held by an upload being stored: a new extract does not move it, so other changes go on meanwhile', async () => {
    const storing = await ownerDb().transaction();
    try {
      await ownerDb().query("INSERT INTO extracts (id, initiative_id, name, created_by) VALUES (gen_random_uuid(), :initiativeId, 'Arriving', :analystId)", {
        replacements: { initiativeId, analystId }, transaction: storing,
      });
      const meanwhile = await ownerDb().transaction();
      try {
        // Would wait for the storing transaction if it held the counter's row.
        await ownerDb().query("SET LOCAL lock_timeout = '2s'", { transaction: meanwhile });
        await ownerDb().query("INSERT INTO run_comments (run_id, initiative_id, author_id, body) VALUES (:runId, :initiativeId, :analystId, 'Meanwhile.')", {
          replacements: { runId, initiativeId, analystId }, transaction: meanwhile,
        });
        await meanwhile.commit();
      } catch (error) {
        await meanwhile.rollback();
        throw error;
      }
    } finally {
      await storing.rollback();
    }
    expect(await moves("UPDATE extracts SET archived_at = now(), archived_by = :analystId WHERE initiative_id = :initiativeId")).toBe(true);
  });

  it('moves only the changed initiative’s counter', async () => {
    const other = await stampOf(otherId);
    expect(await moves('UPDATE analyses SET prespecified = false, prespecified_at = NULL WHERE id = :analysisId')).toBe(true);
    expect(await stampOf(otherId)).toBe(other);
  });

  it('never gives again a number taken by a change that rolled back', async () => {
    const before = await stampOf();
    const transaction = await ownerDb().transaction();
    await ownerDb().query('UPDATE analyses SET prespecified = true, prespecified_at = now() WHERE id = :analysisId', { replacements: { analysisId }, transaction });
    const [{ stamp: inside }] = await ownerDb().query<{ stamp: string }>('SELECT stamp FROM initiative_stamps WHERE initiative_id = :initiativeId', { replacements: { initiativeId }, type: QueryTypes.SELECT, transaction });
    await transaction.rollback();
    expect(await stampOf()).toBe(before);
    expect(await moves('UPDATE analyses SET prespecified = true, prespecified_at = now() WHERE id = :analysisId')).toBe(true);
    const after = await stampOf();
    expect(after).not.toBe(inside);
    expect(BigInt(after)).toBeGreaterThan(BigInt(inside));
  });

  it('is read by members only, and the app cannot write it', async () => {
    expect(await withIdentity(analystId, (t) => initiativeStamp(t, initiativeId))).toBe(await stampOf());
    const outsider = (await makeUser()).id;
    expect(await withIdentity(outsider, (t) => initiativeStamp(t, initiativeId))).toBe('0');
    await expect(withIdentity(analystId, (t) => sequelize.query("UPDATE initiative_stamps SET stamp = 0 WHERE initiative_id = :initiativeId", { replacements: { initiativeId }, transaction: t })))
      .rejects.toMatchObject({ original: { code: '42501' } });
  });

  it('comes with a run, in the one read a kept results page makes, for members only', async () => {
    const { readRunStamp } = await import('@/lib/server/requestReads');
    const [run] = await ownerDb().query<{ status: string }>('SELECT status FROM runs WHERE id = :runId', { replacements: { runId }, type: QueryTypes.SELECT });
    expect(await readRunStamp(analystId, runId)).toEqual({ initiativeId, status: run.status, stamp: await stampOf() });
    expect(await readRunStamp((await makeUser()).id, runId)).toBeNull();
    expect(await readRunStamp(analystId, "x' OR true --")).toBeNull();
    const before = await stampOf();
    expect(await moves('UPDATE runs SET cancel_requested = true WHERE id = :runId')).toBe(true);
    expect(await readRunStamp(analystId, runId)).toEqual({ initiativeId, status: run.status, stamp: await stampOf() });
    expect(await stampOf()).not.toBe(before);

    // The same, read along with the viewer's session in one round trip (the results page's and the plot data's requests).
    const { hashToken, newToken } = await import('@/lib/server/session');
    const { readSession, readAlongTarget } = await import('@/lib/server/requestReads');
    const sessionId = hashToken(newToken());
    await ownerDb().query(
      "INSERT INTO sessions (id, user_id, expires_at, created_at, last_seen_at) VALUES (:sessionId, :analystId, now() + interval '1 hour', now(), now())",
      { replacements: { sessionId, analystId } },
    );
    expect(readAlongTarget(`/runs/${runId.toUpperCase()}`)).toEqual({ kind: 'run', id: runId });
    expect(readAlongTarget(`/api/runs/${runId}/plot-data`)).toEqual({ kind: 'run', id: runId });
    expect(readAlongTarget(`/api/runs/${runId}`)).toBeNull();
    expect(readAlongTarget(`/runs/${runId}/compare`)).toBeNull();
    const found = await readSession(sessionId, readAlongTarget(`/runs/${runId}`));
    expect(found?.page).toEqual({ kind: 'run', id: runId, userId: analystId, run: { initiativeId, status: run.status, stamp: await stampOf() } });
    expect(found?.row.user_id).toBe(analystId);
    expect(await readRunStamp(analystId, runId, found!.page)).toEqual({ initiativeId, status: run.status, stamp: await stampOf() });
    const elsewhere = (await readSession(sessionId, { kind: 'run', id: '00000000-0000-4000-8000-000000000000' }))?.page;
    expect(elsewhere).toEqual({ kind: 'run', id: '00000000-0000-4000-8000-000000000000', userId: analystId, run: null });
  });
});

describe('the tables that move the counter', () => {
  /** Tables with initiative_id that no kept page or kept value shows (upload progress, raw file chunks, the trail, mail). */
  const NOT_SHOWN = ['audit_events', 'notifications', 'extract_intakes', 'extract_files', 'extract_columns', 'brief_deliveries', 'initiative_stamps'];

  it('are every table with initiative_id but those no kept page shows', async () => {
    const rows = await ownerDb().query<{ table: string; moves: boolean }>(
      `SELECT c.relname AS table,
              EXISTS (SELECT 1 FROM pg_trigger t WHERE t.tgrelid = c.oid AND t.tgname LIKE '%move_initiative_stamp%' AND NOT t.tgisinternal) AS moves
         FROM pg_class c JOIN pg_namespace n ON n.oid = c.relnamespace
        WHERE n.nspname = 'public' AND c.relkind = 'r'
          AND EXISTS (SELECT 1 FROM pg_attribute a WHERE a.attrelid = c.oid AND a.attname = 'initiative_id' AND NOT a.attisdropped)
        ORDER BY 1`,
      { type: QueryTypes.SELECT },
    );
    const missing = rows.filter((row) => !row.moves && !NOT_SHOWN.includes(row.table)).map((row) => row.table);
    expect(missing).toEqual([]);
    expect(rows.filter((row) => row.moves).map((row) => row.table)).toContain('runs');
  });
});

describe('a value kept under a counter', () => {
  it('is served only under the same counter, and the least recently used goes first', async () => {
    const cache = new StampedCache<string>(2);
    let worked = 0;
    const work = (value: string) => async () => { worked += 1; return value; };
    expect(await cache.through('a', '1', work('a1'))).toBe('a1');
    expect(await cache.through('a', '1', work('other'))).toBe('a1');
    expect(worked).toBe(1);
    expect(await cache.through('a', '2', work('a2'))).toBe('a2');
    expect(worked).toBe(2);
    cache.set('b', '1', 'b1');
    expect(cache.get('a', '2')).toBe('a2');
    cache.set('c', '1', 'c1');
    // b was the least recently used.
    expect(cache.get('b', '1')).toBeUndefined();
    expect(cache.get('a', '2')).toBe('a2');
    expect(cache.get('c', '1')).toBe('c1');
  });
});
