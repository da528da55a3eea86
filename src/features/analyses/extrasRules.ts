/**
 * The rules for the cluster, person-time and frequency-weights fields of a specification:
 * the combinations saving refuses (the same messages on the form and from the server, and
 * the engine refuses them again at run time), and the columns each field offers.
 */
import type { Spec } from '@/engine/boundary/schemas';
import type { FormColumn } from './formColumns';

type ExtrasSpec = Pick<Spec, 'outcome' | 'model'> & Partial<Pick<Spec, 'exposure' | 'modifier' | 'covariates' | 'cluster' | 'weights' | 'standardErrors' | 'ci'>>;

/** Why saving refuses these fields, as { path, message } with paths into the request body. */
export function extrasProblems(spec: ExtrasSpec): { path: string; message: string }[] {
  const problems: { path: string; message: string }[] = [];
  const personTime = spec.outcome.personTime;
  if (personTime !== undefined) {
    if (spec.outcome.type !== 'count') problems.push({ path: 'spec.outcome.personTime', message: 'Person-time applies only to a count outcome.' });
    else if (spec.model !== 'poisson') problems.push({ path: 'spec.outcome.personTime', message: 'Person-time needs the Poisson model.' });
    else if (personTime === spec.outcome.column) problems.push({ path: 'spec.outcome.personTime', message: 'The person-time column must differ from the outcome.' });
  }
  if (spec.standardErrors === 'robust' && spec.model !== 'poisson') {
    problems.push({ path: 'spec.standardErrors', message: 'Robust standard errors are chosen here for the Poisson model only.' });
  }
  const cluster = spec.cluster?.column;
  if (cluster !== undefined) {
    const role =
      cluster === spec.modifier?.column ? 'the modifier' : cluster === spec.exposure?.column ? 'the intervention' : cluster === spec.outcome.column ? 'the outcome' : cluster === personTime ? 'the person-time' : null;
    if (role) problems.push({ path: 'spec.cluster.column', message: `The cluster column cannot be ${role}; choose the site or ward the rows belong to.` });
    else if (spec.ci?.method === 'bootstrap') problems.push({ path: 'spec.cluster.column', message: 'The bootstrap resamples rows and would ignore clusters; choose the delta method or MOVER with a cluster column.' });
    else if (spec.standardErrors !== undefined && spec.standardErrors !== 'model') {
      problems.push({ path: 'spec.cluster.column', message: 'Cluster-robust standard errors replace the robust ones; choose one or the other.' });
    }
  }
  const weights = spec.weights?.column;
  if (weights !== undefined) {
    const taken = [spec.outcome.column, spec.exposure?.column, spec.modifier?.column, personTime, cluster, ...(spec.covariates ?? []).map((c) => c.column)];
    if (taken.includes(weights)) problems.push({ path: 'spec.weights.column', message: 'The weights column already has a role; frequency weights need a column of their own.' });
  }
  return problems;
}

/** Why a column cannot hold frequency weights (positive whole numbers), or null. */
export function weightsColumnRefusal(column: FormColumn | undefined): string | null {
  if (!column) return 'Choose the weights column.';
  if (column.type !== 'count') return `${column.name} is not a count column; frequency weights are positive whole numbers.`;
  if (column.numeric && column.numeric.min < 1) return `${column.name} holds ${column.numeric.min}; frequency weights must be positive whole numbers (1 or more).`;
  return null;
}

/** Why a column cannot hold person-time (positive numbers), or null. */
export function personTimeColumnRefusal(column: FormColumn | undefined): string | null {
  if (!column) return 'Choose the person-time column.';
  if (column.type !== 'continuous' && column.type !== 'count') return `${column.name} is not numeric; person-time is a positive number per row.`;
  if (column.numeric && column.numeric.min <= 0) return `${column.name} holds ${column.numeric.min}; person-time must be positive (rows with 0 are refused at run time).`;
  return null;
}

/** Why a column cannot define clusters, or null. */
export function clusterColumnRefusal(column: FormColumn | undefined): string | null {
  if (!column) return 'Choose the cluster column.';
  if (column.type === 'continuous') return `${column.name} is continuous; clusters are groups such as sites or wards.`;
  return null;
}

export interface ExtrasChoices {
  clusters: { name: string; disabledReason?: string }[];
  weights: { name: string; disabledReason?: string }[];
  personTimes: { name: string; disabledReason?: string }[];
}

/** The columns the cluster, weights and person-time fields offer (unsuitable ones with the reason). */
export function extrasChoices(columns: readonly FormColumn[], roles: readonly string[]): ExtrasChoices {
  const open = columns.filter((column) => !roles.includes(column.name));
  const offer = (refusal: (column: FormColumn) => string | null) =>
    open.map((column) => {
      const reason = refusal(column);
      return reason === null ? { name: column.name } : { name: column.name, disabledReason: reason };
    });
  return { clusters: offer(clusterColumnRefusal), weights: offer(weightsColumnRefusal), personTimes: offer(personTimeColumnRefusal) };
}
