/** Whether each modifier of a subgroup screen was prespecified, from the initiative's register. */
import { QueryTypes, type Transaction } from 'sequelize';
import type { AnySpec } from '@/engine/boundary/schemas';
import { sequelize } from '@/lib/server/db';
import { modifierColumns } from '@/features/analyses/screenSpecs';
import { planStanding } from '@/features/planning/planning.server';
import type { ModifierStanding } from './subgroupScreenView';

/** Each screened modifier's standing against the register as it was when the run's data arrived. */
export async function screenStandings(transaction: Transaction, runId: string): Promise<ModifierStanding[]> {
  const [run] = await sequelize.query<{ initiative_id: string; spec: AnySpec; uploaded_at: Date }>(
    'SELECT r.initiative_id, r.spec, v.uploaded_at FROM runs r JOIN extract_versions v ON v.id = r.extract_version_id WHERE r.id = :runId',
    { replacements: { runId }, type: QueryTypes.SELECT, transaction },
  );
  if (!run) return [];
  const standings: ModifierStanding[] = [];
  for (const column of modifierColumns(run.spec)) {
    const standing = await planStanding(transaction, { initiativeId: run.initiative_id, modifierColumn: column, outcomeColumn: run.spec.outcome.column, dataArrivedAt: run.uploaded_at }, null);
    standings.push({ column, planned: standing.status === 'planned', reason: standing.reason });
  }
  return standings;
}
