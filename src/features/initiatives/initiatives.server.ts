/** Reading one initiative as a member sees it (row-level security decides what exists). */
import { QueryTypes, type Transaction } from 'sequelize';
import { z } from 'zod';
import { sequelize } from '../../lib/server/db';

export interface InitiativeOverview {
  id: string;
  name: string;
  organisation: string;
  description: string;
  readersSeeRows: boolean;
  members: { userId: string; displayName: string; role: 'analyst' | 'clinician' | 'auditor' }[];
}

/** The initiative and its members, or null when it does not exist for this caller. */
export async function getInitiative(transaction: Transaction, initiativeId: string): Promise<InitiativeOverview | null> {
  if (!z.uuid().safeParse(initiativeId).success) return null;
  const [row] = await sequelize.query<{ id: string; name: string; organisation: string; description: string; readers_see_rows: boolean }>(
    'SELECT id, name, organisation, description, readers_see_rows FROM initiatives WHERE id = :id AND archived_at IS NULL',
    { replacements: { id: initiativeId }, type: QueryTypes.SELECT, transaction },
  );
  if (!row) return null;
  const members = await sequelize.query<InitiativeOverview['members'][number]>(
    `SELECT u.id AS "userId", u.display_name AS "displayName", m.role
       FROM memberships m JOIN users u ON u.id = m.user_id
      WHERE m.initiative_id = :id AND u.status = 'active' ORDER BY m.role, u.display_name`,
    { replacements: { id: initiativeId }, type: QueryTypes.SELECT, transaction },
  );
  return { id: row.id, name: row.name, organisation: row.organisation, description: row.description, readersSeeRows: row.readers_see_rows, members };
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
