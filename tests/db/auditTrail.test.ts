/**
 * The audit trail's core: append-only for the application role, hash-chained, serialised
 * against concurrent writers, and verifiable. Standards: HIPAA Security Rule 45 CFR
 * 164.312(b), 21 CFR 11.10(e), NIST SP 800-53 AU-9 (shared design standards, audit trail).
 */
import { spawnSync } from 'node:child_process';
import { writeFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { QueryTypes } from 'sequelize';
import { recordAudit, takeCheckpoint, verifyAuditChain } from '@/features/audit/audit.server';
import type { AuditCheckpoint } from '@/features/audit/audit.schema';
import { sequelize, withIdentity } from '@/lib/server/db';
import { addMember, closeOwnerDb, makeInitiative, makeUser, ownerDb } from '../support/factories';

afterAll(async () => {
  await closeOwnerDb();
});

const verify = () => withIdentity(null, (t) => verifyAuditChain(t));

describe('appending', () => {
  it('links each event to the one before and keeps the chain intact', async () => {
    const user = await makeUser();
    const before = await verify();
    await withIdentity(user.id, (t) => recordAudit(t, { action: 'auth.sign-in', actorId: user.id, clientAddress: '127.0.0.1' }));
    await withIdentity(user.id, (t) => recordAudit(t, { action: 'auth.sign-out', actorId: user.id, details: { why: 'test' } }));
    const after = await verify();
    expect(after.intact).toBe(true);
    expect(after.checked).toBe(before.checked + 2);
    const [last, previous] = await ownerDb().query<{ prev_hash: string; hash: string; action: string }>(
      'SELECT prev_hash, hash, action FROM audit_events ORDER BY chain_position DESC LIMIT 2',
      { type: QueryTypes.SELECT },
    );
    expect(last.action).toBe('auth.sign-out');
    expect(last.prev_hash).toBe(previous.hash);
    expect(last.hash).toMatch(/^[0-9a-f]{64}$/);
  });

  it('records the actor’s role in the initiative', async () => {
    const user = await makeUser();
    const initiative = await makeInitiative();
    await addMember(initiative.id, user.id, 'clinician');
    await withIdentity(user.id, (t) => recordAudit(t, { action: 'run.viewed', actorId: user.id, initiativeId: initiative.id }));
    const [row] = await ownerDb().query<{ actor_role: string }>(
      'SELECT actor_role FROM audit_events WHERE actor_id = :id ORDER BY chain_position DESC LIMIT 1',
      { replacements: { id: user.id }, type: QueryTypes.SELECT },
    );
    expect(row.actor_role).toBe('clinician');
  });

  it('commits or rolls back with the action it records', async () => {
    const user = await makeUser();
    const before = await verify();
    await expect(
      withIdentity(user.id, async (t) => {
        await recordAudit(t, { action: 'auth.sign-in', actorId: user.id });
        throw new Error('the action failed');
      }),
    ).rejects.toThrow('the action failed');
    expect((await verify()).checked).toBe(before.checked);
  });

  it('refuses an event that names someone else as the actor', async () => {
    const user = await makeUser();
    const other = await makeUser();
    await expect(withIdentity(user.id, (t) => recordAudit(t, { action: 'auth.sign-in', actorId: other.id }))).rejects.toMatchObject({
      original: { code: '42501' },
    });
  });

  it('never forks under concurrent writers', async () => {
    const users = await Promise.all(Array.from({ length: 6 }, () => makeUser()));
    const before = await verify();
    await Promise.all(
      Array.from({ length: 30 }, (_, i) => {
        const user = users[i % users.length];
        return withIdentity(user.id, (t) => recordAudit(t, { action: 'auth.sign-in', actorId: user.id, details: { i } }));
      }),
    );
    const after = await verify();
    expect(after.intact).toBe(true);
    expect(after.checked).toBe(before.checked + 30);
    const [{ distinct_prev, count }] = await ownerDb().query<{ distinct_prev: string; count: string }>(
      'SELECT count(DISTINCT prev_hash) AS distinct_prev, count(*) AS count FROM audit_events',
      { type: QueryTypes.SELECT },
    );
    expect(Number(distinct_prev)).toBe(Number(count));
  });
});

describe('the application role', () => {
  for (const statement of ['UPDATE audit_events SET action = action', 'DELETE FROM audit_events', 'TRUNCATE audit_events']) {
    it(`may not run ${statement.split(' ')[0]}`, async () => {
      const admin = await makeUser({ isAdmin: true });
      await withIdentity(admin.id, (t) => recordAudit(t, { action: 'auth.sign-in', actorId: admin.id }));
      await expect(withIdentity(admin.id, (t) => sequelize.query(statement, { transaction: t }))).rejects.toMatchObject({
        original: { code: '42501' },
      });
    });
  }
});

describe('tamper evidence', () => {
  it('reports one flipped byte at the first broken link', async () => {
    const user = await makeUser();
    for (const n of [1, 2, 3]) {
      await withIdentity(user.id, (t) => recordAudit(t, { action: 'auth.sign-in', actorId: user.id, details: { n } }));
    }
    const [target] = await ownerDb().query<{ id: string; chain_position: string; client_address: string | null; action: string }>(
      `SELECT id, chain_position, action FROM audit_events WHERE actor_id = :id ORDER BY chain_position LIMIT 1 OFFSET 1`,
      { replacements: { id: user.id }, type: QueryTypes.SELECT },
    );
    // Flip one byte of the stored action ("auth.sign-in" → "auth.sign-im") behind the
    // application's back, as an attacker with owner access would, then put it back.
    const tampered = `${target.action.slice(0, -1)}m`;
    const rewrite = (action: string) =>
      ownerDb().transaction(async (t) => {
        await ownerDb().query('ALTER TABLE audit_events DISABLE TRIGGER audit_events_no_change', { transaction: t });
        await ownerDb().query('UPDATE audit_events SET action = :action WHERE id = :id', { replacements: { action, id: target.id }, transaction: t });
        await ownerDb().query('ALTER TABLE audit_events ENABLE TRIGGER audit_events_no_change', { transaction: t });
      });
    await rewrite(tampered);
    try {
      const report = await verify();
      expect(report.intact).toBe(false);
      expect(report.broken?.position).toBe(Number(target.chain_position));
      expect(report.broken?.eventId).toBe(Number(target.id));
      expect(report.broken?.reason).toMatch(/content/);
      expect(report.checked).toBe(Number(target.chain_position) - 1);
    } finally {
      await rewrite(target.action);
    }
    expect((await verify()).intact).toBe(true);
  });
});

describe('checkpoints of the chain head (standards: truncation is detectable)', () => {
  const append = async (n: number) => {
    const user = await makeUser();
    for (let i = 0; i < n; i += 1) await withIdentity(user.id, (t) => recordAudit(t, { action: 'auth.sign-in', actorId: user.id, details: { i } }));
  };
  const checkpointNow = async (): Promise<AuditCheckpoint> => (await withIdentity(null, (t) => takeCheckpoint(t)))!;

  it('records the head position and hash, and holds while events are added', async () => {
    await append(1);
    const checkpoint = await checkpointNow();
    const [head] = await ownerDb().query<{ hash: string }>('SELECT hash FROM audit_events WHERE chain_position = :p', {
      replacements: { p: checkpoint.position }, type: QueryTypes.SELECT,
    });
    expect(checkpoint.hash).toBe(head.hash);
    await append(2);
    const report = await withIdentity(null, (t) => verifyAuditChain(t, checkpoint));
    expect(report.intact).toBe(true);
    expect(report.checkpoint?.holds).toBe(true);
    expect(report.headPosition).toBeGreaterThanOrEqual(checkpoint.position + 2);
    expect(report.checkpoint?.finding).toMatch(/^Holds: /);
  });

  it('fails when the event at the checkpoint no longer has its hash', async () => {
    await append(1);
    const checkpoint = await checkpointNow();
    const forged = { ...checkpoint, hash: checkpoint.hash.replace(/^./, (c) => (c === '0' ? '1' : '0')) };
    const report = await withIdentity(null, (t) => verifyAuditChain(t, forged));
    expect(report.broken).toBeNull();
    expect(report.intact).toBe(false);
    expect(report.checkpoint?.holds).toBe(false);
    expect(report.checkpoint?.finding).toMatch(/^Rewritten: the event at position \d+/);
  });

  it('reveals deleted newest events, which the links alone do not', async () => {
    await append(3);
    const checkpoint = await checkpointNow();
    // Remove the two newest events behind the application's back, as someone with owner
    // access would, inside a transaction that is rolled back afterwards. The table lock
    // taken by ALTER TABLE keeps other writers out meanwhile.
    const t = await ownerDb().transaction();
    try {
      await ownerDb().query('ALTER TABLE audit_events DISABLE TRIGGER audit_events_no_change', { transaction: t });
      await ownerDb().query('DELETE FROM audit_events WHERE chain_position >= :from', { replacements: { from: checkpoint.position - 1 }, transaction: t });
      const alone = await verifyAuditChain(t);
      expect(alone.intact).toBe(true);
      expect(alone.headPosition).toBe(checkpoint.position - 2);
      const against = await verifyAuditChain(t, checkpoint);
      expect(against.broken).toBeNull();
      expect(against.intact).toBe(false);
      expect(against.checkpoint?.holds).toBe(false);
      expect(against.checkpoint?.finding).toBe(
        `Truncated: the checkpoint of ${checkpoint.takenAt} records an event at position ${checkpoint.position}, but the chain now ends at position ${checkpoint.position - 2}.`,
      );
    } finally {
      await t.rollback();
    }
    expect((await withIdentity(null, (tx) => verifyAuditChain(tx, checkpoint))).checkpoint?.holds).toBe(true);
  });
});

describe('a checkpoint checked against a broken chain (issue 13)', () => {
  /** Changes one stored action behind the application's back; returns the undo. */
  async function tamperWith(position: number): Promise<() => Promise<void>> {
    const [target] = await ownerDb().query<{ id: string; action: string }>('SELECT id, action FROM audit_events WHERE chain_position = :position', {
      replacements: { position }, type: QueryTypes.SELECT,
    });
    const rewrite = (action: string) =>
      ownerDb().transaction(async (t) => {
        await ownerDb().query('ALTER TABLE audit_events DISABLE TRIGGER audit_events_no_change', { transaction: t });
        await ownerDb().query('UPDATE audit_events SET action = :action WHERE id = :id', { replacements: { action, id: target.id }, transaction: t });
        await ownerDb().query('ALTER TABLE audit_events ENABLE TRIGGER audit_events_no_change', { transaction: t });
      });
    await rewrite(`${target.action.slice(0, -1)}m`);
    return () => rewrite(target.action);
  }

  it('says the chain is broken, never that the checkpoint holds with events "added since"', async () => {
    const user = await makeUser();
    const append = async (n: number) => {
      for (let i = 0; i < n; i += 1) await withIdentity(user.id, (t) => recordAudit(t, { action: 'auth.sign-in', actorId: user.id, details: { i } }));
    };
    await append(3);
    const checkpoint = (await withIdentity(null, (t) => takeCheckpoint(t)))!;
    await append(3);
    for (const position of [checkpoint.position - 1, checkpoint.position + 2]) {
      const undo = await tamperWith(position);
      try {
        const report = await withIdentity(null, (t) => verifyAuditChain(t, checkpoint));
        expect(report.broken?.position).toBe(position);
        expect(report.intact).toBe(false);
        expect(report.checkpoint?.holds).toBe(false);
        expect(report.checkpoint?.finding).toMatch(new RegExp(`^Broken: .*the chain is broken at position ${position}`));
        expect(report.checkpoint?.finding).not.toMatch(/Holds|added since/);
      } finally {
        await undo();
      }
    }
    expect((await withIdentity(null, (t) => verifyAuditChain(t, checkpoint))).checkpoint?.holds).toBe(true);
  });
});

describe('the audit:checkpoint command', () => {
  const command = path.resolve(import.meta.dirname, '../../src/features/audit/checkpointCommand.ts');
  const run = (...args: string[]) => spawnSync('npx', ['tsx', command, ...args], { env: process.env, encoding: 'utf8' });

  it('prints a checkpoint, and checks the chain against a file of them (newest line wins)', async () => {
    const taken = run();
    expect(taken.status).toBe(0);
    const checkpoint = JSON.parse(taken.stdout) as AuditCheckpoint;
    expect(checkpoint.format).toBe('crossgrain-audit-checkpoint/1');
    const file = path.join(os.tmpdir(), `checkpoints-${process.pid}-${Date.now()}.jsonl`);
    const older = { ...checkpoint, position: 1, hash: '0'.repeat(64) };
    writeFileSync(file, `${JSON.stringify(older)}\n${taken.stdout}`);
    const checked = run('--verify', file);
    expect(checked.status).toBe(0);
    expect(JSON.parse(checked.stdout).checkpoint).toMatchObject({ position: checkpoint.position, holds: true });

    writeFileSync(file, `${JSON.stringify({ ...checkpoint, hash: 'f'.repeat(64) })}\n`);
    const rewritten = run('--verify', file);
    expect(rewritten.status).toBe(1);
    expect(JSON.parse(rewritten.stdout).checkpoint.finding).toMatch(/^Rewritten/);
  });

  it('refuses a file that is not a checkpoint with a JSON error and exit code 2', () => {
    const file = path.join(os.tmpdir(), `not-a-checkpoint-${process.pid}.json`);
    writeFileSync(file, 'position,hash\n3,abc\n');
    const refused = run('--verify', file);
    expect(refused.status).toBe(2);
    expect(JSON.parse(refused.stderr).error).toMatch(/is not JSON/);
  });
});
