/**
 * What a run reads before the engine starts: the columns its specification uses, as
 * engine-ready data, through the extracts area's one public loader.
 */
import type { EngineData } from '@/engine';
import type { Spec } from '@/engine/boundary/schemas';
import { withIdentity } from '@/lib/server/db';
import { columnUnit, loadAnalysisData } from '../extracts/columns.server';
import { columnRoles } from './columnRoles';

/** The run's data, read as the analyst who started it (row-level security applies). */
export async function loadRunData(startedBy: string, extractVersionId: string, spec: Spec): Promise<EngineData> {
  return withIdentity(startedBy, (t) => loadAnalysisData(t, extractVersionId, columnRoles(spec)));
}

/** The dictionary's unit of the person-time column (null without person-time or unit), shown with the rates. */
export async function loadPersonTimeUnit(startedBy: string, extractVersionId: string, spec: Spec): Promise<string | null> {
  const column = spec.outcome.personTime;
  if (column === undefined) return null;
  return withIdentity(startedBy, (t) => columnUnit(t, extractVersionId, column));
}
