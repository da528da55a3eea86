/**
 * Following one's runs: the analyst's own runs with their review state and latest note
 * (the home page), and the review state of any runs (the overview's run list). The
 * review state is a run's latest review step, 'draft' when it has none.
 */
import { QueryTypes, type Transaction } from 'sequelize';
import { sequelize } from '@/lib/server/db';

export type FollowedState = 'draft' | 'submitted' | 'sent-back' | 'signed-off';

export interface LatestStep { state: FollowedState; note: string; by: string | null; at: string | null }

export interface OwnRun extends LatestStep {
  id: string;
  shortId: string;
  title: string;
  initiativeId: string;
  initiativeName: string;
  status: string;
  queuedAt: string;
}

const iso = (value: Date | null) => (value ? new Date(value).toISOString() : null);

/** The runs the person started (re-runs that verify another left out), newest first, with their review. */
export async function ownRuns(transaction: Transaction, userId: string, limit = 15): Promise<OwnRun[]> {
  // The latest step per run joined to runs, analyses and initiatives (LATERAL): a reporting query, raw SQL.
  const rows = await sequelize.query<{
    id: string; title: string; initiative_id: string; initiative_name: string; status: string; queued_at: Date;
    kind: FollowedState | null; note: string | null; by: string | null; step_at: Date | null;
  }>(
    `SELECT r.id, a.title, r.initiative_id, i.name AS initiative_name, r.status, r.queued_at, s.kind, s.note, u.display_name AS by, s.created_at AS step_at
       FROM runs r
       JOIN analyses a ON a.id = r.analysis_id
       JOIN initiatives i ON i.id = r.initiative_id
       LEFT JOIN LATERAL (SELECT kind, note, actor_id, created_at FROM review_steps WHERE run_id = r.id AND kind <> 'co-signed' ORDER BY id DESC LIMIT 1) s ON true
       LEFT JOIN users u ON u.id = s.actor_id
      WHERE r.started_by = :userId AND r.verifies_run_id IS NULL
      ORDER BY coalesce(s.created_at, r.queued_at) DESC
      LIMIT :limit`,
    { replacements: { userId, limit }, type: QueryTypes.SELECT, transaction },
  );
  return rows.map((row) => ({
    id: row.id, shortId: row.id.slice(0, 8), title: row.title, initiativeId: row.initiative_id, initiativeName: row.initiative_name,
    status: row.status, queuedAt: new Date(row.queued_at).toISOString(),
    state: row.kind ?? 'draft', note: row.note ?? '', by: row.by, at: iso(row.step_at),
  }));
}

/** The review state and latest note of each of the given runs. */
export async function latestSteps(transaction: Transaction, runIds: readonly string[]): Promise<Map<string, LatestStep>> {
  if (runIds.length === 0) return new Map();
  // The latest step per run (DISTINCT ON): a reporting query, raw SQL.
  const rows = await sequelize.query<{ run_id: string; kind: FollowedState; note: string; by: string; created_at: Date }>(
    `SELECT DISTINCT ON (s.run_id) s.run_id, s.kind, s.note, u.display_name AS by, s.created_at
       FROM review_steps s JOIN users u ON u.id = s.actor_id
      WHERE s.run_id = ANY($1::uuid[]) AND s.kind <> 'co-signed' ORDER BY s.run_id, s.id DESC`,
    { bind: [runIds], type: QueryTypes.SELECT, transaction },
  );
  const found = new Map(rows.map((row) => [row.run_id, { state: row.kind, note: row.note, by: row.by, at: iso(row.created_at) }]));
  return new Map(runIds.map((id) => [id, found.get(id) ?? { state: 'draft', note: '', by: null, at: null }]));
}
