import type { AnySpec } from '@/engine/boundary/schemas';
import { singleSpecs } from '@/features/analyses/screenSpecs';

/** The roles the engine needs for each column a specification uses (every modifier of a screen). */
export function columnRoles(anySpec: AnySpec): Record<string, 'categorical' | 'continuous'> {
  const roles: Record<string, 'categorical' | 'continuous'> = {};
  for (const spec of singleSpecs(anySpec)) {
    roles[spec.outcome.column] = spec.outcome.event !== undefined ? 'categorical' : 'continuous';
    roles[spec.exposure.column] = spec.exposure.type === 'continuous' ? 'continuous' : 'categorical';
    roles[spec.modifier.column] = spec.modifier.type;
    for (const covariate of spec.covariates) roles[covariate.column] = covariate.type;
    // Person-time and frequency weights are numbers; clusters are groups (a cluster column
    // that is also a covariate keeps the covariate's role: the engine groups by its values).
    if (spec.outcome.personTime !== undefined) roles[spec.outcome.personTime] = 'continuous';
    if (spec.weights !== undefined) roles[spec.weights.column] = 'continuous';
    if (spec.cluster !== undefined) roles[spec.cluster.column] ??= 'categorical';
  }
  return roles;
}
