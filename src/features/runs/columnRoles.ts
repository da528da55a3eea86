import type { AnySpec } from '@/engine/boundary/schemas';
import { singleSpecs } from '@/features/analyses/screenSpecs';

/** The roles the engine needs for each column a specification uses (every modifier of a screen). */
export function columnRoles(anySpec: AnySpec): Record<string, 'categorical' | 'continuous'> {
  const roles: Record<string, 'categorical' | 'continuous'> = {};
  for (const spec of singleSpecs(anySpec)) {
    roles[spec.outcome.column] = spec.outcome.event !== undefined ? 'categorical' : 'continuous';
    roles[spec.exposure.column] = 'categorical';
    roles[spec.modifier.column] = spec.modifier.type;
    for (const covariate of spec.covariates) roles[covariate.column] = covariate.type;
  }
  return roles;
}
