import type { Spec } from '@/engine/boundary/schemas';

/** The roles the engine needs for each column a specification uses. */
export function columnRoles(spec: Spec): Record<string, 'categorical' | 'continuous'> {
  const roles: Record<string, 'categorical' | 'continuous'> = {
    [spec.outcome.column]: spec.outcome.event !== undefined ? 'categorical' : 'continuous',
    [spec.exposure.column]: 'categorical',
    [spec.modifier.column]: spec.modifier.type,
  };
  for (const covariate of spec.covariates) roles[covariate.column] = covariate.type;
  // Person-time and frequency weights are numbers; clusters are groups (a cluster column
  // that is also a covariate keeps the covariate's role: the engine groups by its values).
  if (spec.outcome.personTime !== undefined) roles[spec.outcome.personTime] = 'continuous';
  if (spec.weights !== undefined) roles[spec.weights.column] = 'continuous';
  if (spec.cluster !== undefined) roles[spec.cluster.column] ??= 'categorical';
  return roles;
}
