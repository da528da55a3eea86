/**
 * What a run reads before the engine starts: the columns its specification uses, as
 * engine-ready data, through the extracts area's one public loader.
 */
import type { EngineData } from '../../engine';
import type { Spec } from '../../engine/boundary/schemas';
import { withIdentity } from '../../lib/server/db';
import { loadAnalysisData } from '../extracts/extracts.server';

/** The roles the engine needs for each column a specification uses. */
export function columnRoles(spec: Spec): Record<string, 'categorical' | 'continuous'> {
  const roles: Record<string, 'categorical' | 'continuous'> = {
    [spec.outcome.column]: spec.outcome.event !== undefined ? 'categorical' : 'continuous',
    [spec.exposure.column]: 'categorical',
    [spec.modifier.column]: spec.modifier.type,
  };
  for (const covariate of spec.covariates) roles[covariate.column] = covariate.type;
  return roles;
}

/** The run's data, read as the analyst who started it (row-level security applies). */
export async function loadRunData(startedBy: string, extractVersionId: string, spec: Spec): Promise<EngineData> {
  return withIdentity(startedBy, (t) => loadAnalysisData(t, extractVersionId, columnRoles(spec)));
}
