import { choleskyFactor, choleskyInverse, choleskySolve, type CholeskyFactor } from '../core/symmetricPositiveDefinite.js';
import type { DesignMatrix } from '../design/designMatrix.js';
import { createPassBuffers, executePass, setCoefficients, type ParallelPassRunner, type PassBuffers } from './blockedPasses.js';
import { assembleCrossProducts } from './crossProductAccumulator.js';
import type { GlmFamily, PassTotals } from './glmPasses.js';

export type { GlmFamily } from './glmPasses.js';

export interface GlmInput {
  readonly design: DesignMatrix;
  /** Outcome: 0/1 for the binomial families, counts (here 0/1) for Poisson. */
  readonly y: Float64Array;
  /** Prior (frequency) weights; null means 1 for every row. Rows of weight 0 are skipped. */
  readonly priorWeights?: Float64Array | null;
  readonly family: GlmFamily;
  /** Starting coefficients; without them the start is R's mustart rule for the family. */
  readonly start?: ArrayLike<number> | null;
  readonly maxIterations?: number;
  readonly epsilon?: number;
  /** Skip the covariance (bootstrap replicates need only the coefficients). */
  readonly computeCovariance?: boolean;
  /** Split each pass across threads (buffers attached to the runner's helpers). */
  readonly parallel?: ParallelContext | null;
}

/** A thread runner with the shared buffers it was attached to for this design and outcome. */
export interface ParallelContext {
  readonly runner: ParallelPassRunner;
  readonly buffers: PassBuffers;
}

export interface GlmFit {
  readonly family: GlmFamily;
  readonly coefficients: Float64Array;
  /** (XᵀWX)⁻¹ from the last weighted least-squares step, row-major; null if not asked for. */
  readonly covarianceUnscaled: Float64Array | null;
  readonly iterations: number;
  readonly converged: boolean;
  readonly deviance: number;
  readonly logLik: number;
  /** Step-halving was needed to keep the fitted means valid (log-binomial) or the deviance finite. */
  readonly boundary: boolean;
  /** Rows whose fitted probability is within 10·ε of 0 or 1 (binomial families). */
  readonly boundaryFittedCount: number;
  /** Largest fitted mean (a fitted risk above 1 is possible under the Poisson model). */
  readonly maxFittedMean: number;
  /** Smallest Cholesky pivot ratio of the final XᵀWX (near 0 = nearly collinear). */
  readonly smallestPivotRatio: number;
  readonly smallestPivotIndex: number;
  /** Sum of prior weights over the rows used. */
  readonly weightSum: number;
}

/** The step could not be repaired by step-halving (R: "inner loop; cannot correct step size"). */
export class InvalidStepError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'InvalidStepError';
  }
}

/** Workspace of one fit, reused across its iterations. */
interface Workspace {
  crossProduct: Float64Array;
  crossResponse: Float64Array;
}

function createWorkspace(design: DesignMatrix): Workspace {
  const p = design.columns;
  return { crossProduct: new Float64Array(p * p), crossResponse: new Float64Array(p) };
}

function runPass(input: GlmInput, buffers: PassBuffers, coefficients: Float64Array | null, workspace: Workspace): PassTotals {
  const { design } = input;
  setCoefficients(design, buffers, coefficients);
  const { accumulator, totals } = executePass(
    design, input.y, input.priorWeights ?? null, buffers,
    { kind: 'glm', family: input.family, fromStart: coefficients === null },
    input.parallel?.runner ?? null,
  );
  assembleCrossProducts(design, accumulator, workspace.crossProduct, workspace.crossResponse);
  return totals;
}

/**
 * Maximum-likelihood fit of a generalized linear model by iteratively reweighted least
 * squares (McCullagh and Nelder, Generalized Linear Models, 2nd ed., 1989, §2.5).
 *
 * Variant: follows R's glm.fit (R 4.2) step for step so that iterations, coefficients and
 * standard errors agree with it: the start is R's mustart (binomial (w·y + ½)/(w + 1),
 * Poisson y + 0.1) unless `start` is given; each iteration solves XᵀWX β = XᵀWz (Cholesky
 * of the Jacobi-scaled normal equations rather than R's QR); convergence when
 * |dev − dev_old|/(|dev| + 0.1) < ε (ε = 1e-8, at most 25 iterations); a step giving a
 * non-finite deviance or an invalid mean (μ ≥ 1 under the log-binomial) is halved towards
 * the previous coefficients; the returned (XᵀWX)⁻¹ uses the weights of the last step, as
 * R's summary.glm does. Passes are summed in fixed row blocks (blockedPasses.ts), so the
 * result does not depend on the number of threads.
 *
 * @throws NotPositiveDefiniteError (from the Cholesky factor) when the design is singular;
 *   InvalidStepError when step-halving cannot find valid means.
 * @example fitGeneralizedLinearModel({ design, y, family: 'binomial-logit' })
 *   // → { coefficients, covarianceUnscaled, iterations: 4, converged: true, ... }
 */
export function fitGeneralizedLinearModel(input: GlmInput): GlmFit {
  const p = input.design.columns;
  const maxIterations = input.maxIterations ?? 25;
  const epsilon = input.epsilon ?? 1e-8;
  const computeCovariance = input.computeCovariance ?? true;
  let current = createWorkspace(input.design);
  let next = createWorkspace(input.design);
  const buffers = input.parallel?.buffers ?? createPassBuffers(input.design, false);

  let previousCoefficients: Float64Array | null = input.start ? Float64Array.from(input.start) : null;
  let totals = runPass(input, buffers, previousCoefficients, current);
  if (totals.invalid || !Number.isFinite(totals.deviance)) {
    throw new InvalidStepError('the starting values give invalid fitted means');
  }
  let previousDeviance = totals.deviance;
  let coefficients = previousCoefficients ?? new Float64Array(p);
  let converged = false;
  let boundary = false;
  let iterations = 0;
  let factor: CholeskyFactor | null = null;

  for (let iteration = 1; iteration <= maxIterations; iteration++) {
    iterations = iteration;
    factor = choleskyFactor(current.crossProduct, p);
    let candidate = choleskySolve(factor, current.crossResponse);
    let candidateTotals = runPass(input, buffers, candidate, next);
    let halvings = 0;
    while (candidateTotals.invalid || !Number.isFinite(candidateTotals.deviance)) {
      if (previousCoefficients === null) throw new InvalidStepError('no valid set of coefficients was found; supply starting values');
      if (++halvings > maxIterations) throw new InvalidStepError('step-halving could not find valid fitted means');
      boundary = true;
      const halved = new Float64Array(p);
      for (let j = 0; j < p; j++) halved[j] = 0.5 * (candidate[j] + previousCoefficients[j]);
      candidate = halved;
      candidateTotals = runPass(input, buffers, candidate, next);
    }
    coefficients = candidate;
    totals = candidateTotals;
    if (Math.abs(totals.deviance - previousDeviance) / (Math.abs(totals.deviance) + 0.1) < epsilon) {
      converged = true;
      break;
    }
    previousDeviance = totals.deviance;
    previousCoefficients = candidate;
    [current, next] = [next, current];
  }
  if (factor === null) throw new InvalidStepError('no iteration was run');
  return {
    family: input.family,
    coefficients,
    covarianceUnscaled: computeCovariance ? choleskyInverse(factor) : null,
    iterations,
    converged,
    deviance: totals.deviance,
    logLik: totals.logLikelihood,
    boundary,
    boundaryFittedCount: totals.boundaryCount,
    maxFittedMean: totals.maxMean,
    smallestPivotRatio: factor.smallestPivotRatio,
    smallestPivotIndex: factor.smallestPivotIndex,
    weightSum: totals.weightSum,
  };
}
