/**
 * Two initiatives, their users querying concurrently through the application's real pool:
 * nobody ever sees the other initiative's rows (shared design standards, row-level
 * security tests).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { QueryTypes } from 'sequelize';
import { recordAudit } from '@/features/audit/audit.server';
import { sequelize, withIdentity } from '@/lib/server/db';
import { addMember, closeOwnerDb, makeInitiative, makeUser } from '../support/factories';

interface Team {
  initiativeId: string;
  users: { id: string }[];
}

const teams: Team[] = [];

beforeAll(async () => {
  for (const name of ['Harbour ward', 'Ridge ward']) {
    const initiative = await makeInitiative(name);
    const users: { id: string }[] = [];
    for (const role of ['analyst', 'clinician', 'auditor'] as const) {
      const user = await makeUser();
      await addMember(initiative.id, user.id, role);
      users.push(user);
    }
    teams.push({ initiativeId: initiative.id, users });
    // Each team's auditor-visible events.
    await withIdentity(users[0].id, (t) =>
      recordAudit(t, { action: 'initiative.viewed', actorId: users[0].id, initiativeId: initiative.id }),
    );
  }
});

afterAll(async () => {
  await closeOwnerDb();
});

describe('concurrent requests from two initiatives', () => {
  it('never show one initiative’s rows to the other', async () => {
    const requests = Array.from({ length: 120 }, (_, i) => {
      const team = teams[i % 2];
      const other = teams[(i + 1) % 2];
      const user = team.users[Math.floor(i / 2) % team.users.length];
      return withIdentity(user.id, async (transaction) => {
        // Interleave with a tiny sleep so transactions overlap on the pool's connections.
        await sequelize.query('SELECT pg_sleep(0.002)', { transaction });
        const initiatives = await sequelize.query<{ id: string }>('SELECT id FROM initiatives', { type: QueryTypes.SELECT, transaction });
        const memberships = await sequelize.query<{ initiative_id: string }>('SELECT initiative_id FROM memberships', { type: QueryTypes.SELECT, transaction });
        const events = await sequelize.query<{ initiative_id: string | null }>(
          'SELECT initiative_id FROM audit_events WHERE initiative_id IS NOT NULL',
          { type: QueryTypes.SELECT, transaction },
        );
        return { own: team.initiativeId, other: other.initiativeId, initiatives, memberships, events };
      });
    });
    const results = await Promise.all(requests);
    for (const r of results) {
      expect(r.initiatives.map((x) => x.id)).toEqual([r.own]);
      expect(new Set(r.memberships.map((m) => m.initiative_id))).toEqual(new Set([r.own]));
      expect(r.events.every((e) => e.initiative_id === r.own)).toBe(true);
    }
    // The auditors did see their own initiative's events (so the check above is not vacuous).
    const auditorViews = results.filter((r) => r.events.length > 0);
    expect(auditorViews.length).toBeGreaterThan(0);
  });
});
