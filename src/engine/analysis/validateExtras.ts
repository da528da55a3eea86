import { InvalidSpecError } from '../errors.js';
import type { AnalysisSpec } from '../types.js';

/**
 * Checks of the count outcome, person-time, cluster and weights fields of a specification
 * (validateSpec calls it): combinations that cannot be analysed are refused with a message
 * naming the field.
 */
export function validateExtras(spec: AnalysisSpec): void {
  const outcome = spec.outcome;
  if (spec.model === 'poisson' && outcome.type !== 'count') {
    throw new InvalidSpecError('The poisson model needs a count outcome (outcome.type "count").', { column: outcome.column });
  }
  if (outcome.type === 'count' && spec.model !== 'poisson') {
    throw new InvalidSpecError(`A count outcome needs the poisson model, not ${spec.model}.`, { column: outcome.column });
  }
  if (outcome.personTime !== undefined) {
    if (typeof outcome.personTime !== 'string' || outcome.personTime === '') throw new InvalidSpecError('outcome.personTime must be a column name.');
    if (outcome.type !== 'count' || spec.model !== 'poisson') {
      throw new InvalidSpecError('Person-time (outcome.personTime) applies only to a count outcome with the poisson model.', { column: outcome.personTime });
    }
  }
  const standardErrors = spec.standardErrors ?? 'model';
  if (standardErrors === 'robust' && spec.model !== 'poisson') {
    throw new InvalidSpecError('standardErrors "robust" applies to the poisson model only (the modified Poisson model is already robust).');
  }
  const roles: [string, string][] = [
    [outcome.column, 'the outcome'],
    [spec.exposure.column, 'the intervention'],
    [spec.modifier.column, 'the modifier'],
  ];
  if (outcome.personTime !== undefined) roles.push([outcome.personTime, 'the person-time column']);
  const cluster = spec.cluster;
  if (cluster !== undefined) {
    if (cluster === null || typeof cluster !== 'object' || typeof cluster.column !== 'string' || cluster.column === '') {
      throw new InvalidSpecError('cluster.column must be a column name.');
    }
    const role = roles.find(([name]) => name === cluster.column);
    if (role !== undefined) {
      throw new InvalidSpecError(`The cluster column "${cluster.column}" is ${role[1]}; clusters must be another column (such as the site or ward).`, { column: cluster.column });
    }
    if (spec.ci.method === 'bootstrap') {
      throw new InvalidSpecError('The bootstrap resamples rows, not clusters, so it would ignore the cluster column; choose delta or MOVER intervals, which use the cluster-robust variance.', { column: cluster.column });
    }
    if (standardErrors !== 'model') {
      throw new InvalidSpecError(`Cluster-robust variance replaces the ${standardErrors} standard errors; leave standardErrors at "model" when a cluster column is given.`, { column: cluster.column });
    }
  }
  const weights = spec.weights;
  if (weights !== undefined) {
    if (weights === null || typeof weights !== 'object' || typeof weights.column !== 'string' || weights.column === '') {
      throw new InvalidSpecError('weights.column must be a column name.');
    }
    const role = [...roles, ...(cluster ? [[cluster.column, 'the cluster column'] as [string, string]] : [])].find(([name]) => name === weights.column);
    const covariate = spec.covariates.some((c) => c.column === weights.column);
    if (role !== undefined || covariate) {
      throw new InvalidSpecError(`The weights column "${weights.column}" is ${role ? role[1] : 'a covariate'}; frequency weights must be a column of their own.`, { column: weights.column });
    }
  }
}
