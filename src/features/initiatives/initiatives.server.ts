/** Reading one initiative as a member sees it (row-level security decides what exists). */
import { QueryTypes, type Transaction } from 'sequelize';
import { z } from 'zod';
import type { Membership, User } from '../../../db/models';
import { models, sequelize } from '../../lib/server/db';

export interface InitiativeOverview {
  id: string;
  name: string;
  organisation: string;
  description: string;
  readersSeeRows: boolean;
  members: { userId: string; displayName: string; role: 'analyst' | 'clinician' | 'auditor' }[];
}

/** The initiative and its active members, or null when it does not exist for this caller. */
export async function getInitiative(transaction: Transaction, initiativeId: string): Promise<InitiativeOverview | null> {
  if (!z.uuid().safeParse(initiativeId).success) return null;
  const { Initiative, Membership, User } = models;
  const initiative = await Initiative.findOne({ where: { id: initiativeId, archivedAt: null }, transaction });
  if (!initiative) return null;
  const memberships = await Membership.findAll({
    where: { initiativeId },
    include: [{ model: User, as: 'user', where: { status: 'active' }, attributes: ['id', 'displayName'] }],
    order: [['role', 'ASC'], [{ model: User, as: 'user' }, 'displayName', 'ASC']],
    transaction,
  });
  return {
    id: initiative.id,
    name: initiative.name,
    organisation: initiative.organisation,
    description: initiative.description,
    readersSeeRows: initiative.readersSeeRows,
    members: memberships.map((m) => {
      const user = (m as Membership & { user: User }).user;
      return { userId: user.id, displayName: user.displayName, role: m.role };
    }),
  };
}

export interface InitiativeActivity {
  readyExtracts: number;
  analyses: number;
  recentRuns: { id: string; analysisId: string; title: string; status: string; queuedAt: string; startedBy: string }[];
}

/** Counts and the latest runs, for the initiative's overview. */
export async function initiativeActivity(transaction: Transaction, initiativeId: string): Promise<InitiativeActivity> {
  const [counts] = await sequelize.query<{ extracts: string; analyses: string }>(
    `SELECT (SELECT count(*) FROM extracts e WHERE e.initiative_id = :id AND e.archived_at IS NULL
               AND EXISTS (SELECT 1 FROM extract_versions v WHERE v.extract_id = e.id AND v.status = 'ready')) AS extracts,
            (SELECT count(*) FROM analyses a WHERE a.initiative_id = :id) AS analyses`,
    { replacements: { id: initiativeId }, type: QueryTypes.SELECT, transaction },
  );
  const runs = await sequelize.query<{ id: string; analysis_id: string; title: string; status: string; queued_at: Date; starter: string }>(
    `SELECT r.id, r.analysis_id, a.title, r.status, r.queued_at, u.display_name AS starter
       FROM runs r JOIN analyses a ON a.id = r.analysis_id JOIN users u ON u.id = r.started_by
      WHERE r.initiative_id = :id ORDER BY r.queued_at DESC LIMIT 6`,
    { replacements: { id: initiativeId }, type: QueryTypes.SELECT, transaction },
  );
  return {
    readyExtracts: Number(counts.extracts),
    analyses: Number(counts.analyses),
    recentRuns: runs.map((r) => ({ id: r.id, analysisId: r.analysis_id, title: r.title, status: r.status, queuedAt: new Date(r.queued_at).toISOString(), startedBy: r.starter })),
  };
}
