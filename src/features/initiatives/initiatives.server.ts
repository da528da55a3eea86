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
