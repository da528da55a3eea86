import type { Spec } from '@/engine/boundary/schemas';

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
