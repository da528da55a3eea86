/** Reading one initiative as a member sees it (row-level security decides what exists). */
import { QueryTypes, type Transaction } from 'sequelize';
import { z } from 'zod';
import { Analysis, Initiative, Membership, Run, User } from '../../../db/models';
import { sequelize } from '@/lib/server/db';

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
    members: memberships.flatMap((m) => (m.user ? [{ userId: m.user.id, displayName: m.user.displayName, role: m.role }] : [])),
  };
}

export interface InitiativeActivity {
  readyExtracts: number;
  analyses: number;
  recentRuns: { id: string; analysisId: string; title: string; status: string; queuedAt: string; startedBy: string }[];
}

/** Counts and the latest runs, for the initiative's overview. */
export async function initiativeActivity(transaction: Transaction, initiativeId: string): Promise<InitiativeActivity> {
  // Two counts, one over a correlated EXISTS: a reporting query, raw SQL.
  const [counts] = await sequelize.query<{ extracts: string; analyses: string }>(
    `SELECT (SELECT count(*) FROM extracts e WHERE e.initiative_id = :id AND e.archived_at IS NULL
               AND EXISTS (SELECT 1 FROM extract_versions v WHERE v.extract_id = e.id AND v.status = 'ready')) AS extracts,
            (SELECT count(*) FROM analyses a WHERE a.initiative_id = :id) AS analyses`,
    { replacements: { id: initiativeId }, type: QueryTypes.SELECT, transaction },
  );
  const runs = await Run.findAll({
    attributes: ['id', 'analysisId', 'status', 'queuedAt'],
    where: { initiativeId },
    include: [
      { model: Analysis, as: 'analysis', attributes: ['title'], required: true },
      { model: User, as: 'starter', attributes: ['displayName'], required: true },
    ],
    order: [['queuedAt', 'DESC']],
    limit: 6,
    transaction,
  });
  return {
    readyExtracts: Number(counts.extracts),
    analyses: Number(counts.analyses),
    recentRuns: runs.map((r) => ({
      id: r.id, analysisId: r.analysisId, title: r.analysis?.title ?? '', status: r.status,
      queuedAt: new Date(r.queuedAt).toISOString(), startedBy: r.starter?.displayName ?? '',
    })),
  };
}
