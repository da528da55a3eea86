import { choleskyFactor, choleskyInverse, choleskySolve, NotPositiveDefiniteError, type CholeskyFactor } from '../core/symmetricPositiveDefinite.js';
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
  /** (XᵀWX)⁻¹ at the working weights of the final coefficients, row-major; null if not asked for. */
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

/** R's glm.control() default: |dev − dev_old|/(|dev| + 0.1) below this is R's convergence. */
export const R_DEFAULT_EPSILON = 1e-8;
/** Further Fisher-scoring steps allowed, after R's criterion is met, to reach the maximum. */
const POLISH_ITERATIONS = 25;
/** A proposed step with Δᵀ(XᵀWX)Δ at most this fraction of (|dev| + 0.1) changes nothing. */
const NEGLIGIBLE_STEP = 1e-20;

/** Δᵀ A Δ for the step Δ = candidate − coefficients (the squared Newton decrement). */
function stepSize(crossProduct: Float64Array, candidate: Float64Array, coefficients: Float64Array, p: number): number {
  let total = 0;
  for (let j = 0; j < p; j++) {
    const dj = candidate[j] - coefficients[j];
    let inner = 0;
    for (let k = 0; k < p; k++) inner += crossProduct[j * p + k] * (candidate[k] - coefficients[k]);
    total += dj * inner;
  }
  return total;
}

/**
 * Maximum-likelihood fit of a generalized linear model by iteratively reweighted least
 * squares (Fisher scoring; McCullagh and Nelder, Generalized Linear Models, 2nd ed., 1989,
 * §2.5).
 *
 * Variant: the steps are R's glm.fit (R 4.2): the start is R's mustart (binomial
 * (w·y + ½)/(w + 1), Poisson y + 0.1) unless `start` is given; each iteration solves
 * XᵀWX β = XᵀWz (Cholesky of the Jacobi-scaled normal equations rather than R's QR); a step
 * giving a non-finite deviance or an invalid mean (μ ≥ 1 under the log-binomial) is halved
 * towards the previous coefficients.
 * Convergence, in two stages: (1) R's rule |dev − dev_old|/(|dev| + 0.1) < ε (ε = 1e-8, at
 * most 25 iterations; not meeting it is "not converged"); (2) then, so that the estimate is
 * the maximum itself rather than R's stopping point, scoring goes on until the next step
 * Δ (computed from the pass at the current coefficients) changes nothing:
 * Δᵀ(XᵀWX)Δ ≤ 1e-20·(|dev| + 0.1) (an estimate within about 1e-10 of the maximum on the
 * linear-predictor scale), or Δᵀ(XᵀWX)Δ no longer shrinks (rounding reached), or 25 further
 * steps. Logistic and Poisson fits (canonical links, Newton steps) typically need one step
 * beyond R's default rule. The returned (XᵀWX)⁻¹ is evaluated at the final coefficients'
 * working weights (not those of the step before, as R's summary.glm does), so every
 * variance built on it belongs to the estimate reported. Against glm() with
 * glm.control(epsilon = 1e-14, maxit = 100) the fits agree to 1e-8 or better. Passes are
 * summed in fixed row blocks (blockedPasses.ts), so the result does not depend on the
 * number of threads.
 *
 * @throws NotPositiveDefiniteError (from the Cholesky factor) when the design is singular;
 *   InvalidStepError when step-halving cannot find valid means.
 * @example fitGeneralizedLinearModel({ design, y, family: 'binomial-logit' })
 *   // → { coefficients, covarianceUnscaled, iterations: 5, converged: true, ... }
 */
export function fitGeneralizedLinearModel(input: GlmInput): GlmFit {
  const p = input.design.columns;
  const maxIterations = input.maxIterations ?? 25;
  const epsilon = input.epsilon ?? R_DEFAULT_EPSILON;
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
  let previousStep = Number.POSITIVE_INFINITY;
  // The factor of `current` (XᵀWX at `coefficients`) once it has been computed.
  let finalFactor: CholeskyFactor | null = null;
  // Stage 2's last estimate with a usable XᵀWX: under (quasi-)separation further steps drive
  // some working weights to 0 until XᵀWX is numerically singular; the fit then ends there.
  let lastUsable: { factor: CholeskyFactor; coefficients: Float64Array; totals: PassTotals; iterations: number } | null = null;
  const factorOrLastUsable = (): CholeskyFactor | null => {
    try {
      return choleskyFactor(current.crossProduct, p);
    } catch (error) {
      if (!(error instanceof NotPositiveDefiniteError) || lastUsable === null) throw error;
      ({ coefficients, totals, iterations } = lastUsable);
      finalFactor = lastUsable.factor;
      return null;
    }
  };

  for (let iteration = 1; iteration <= maxIterations + (converged ? POLISH_ITERATIONS : 0); iteration++) {
    const factor = converged ? factorOrLastUsable() : choleskyFactor(current.crossProduct, p);
    if (factor === null) break;
    if (converged) lastUsable = { factor, coefficients, totals, iterations };
    let candidate = choleskySolve(factor, current.crossResponse);
    if (converged) {
      // Stage 2: stop when the next step would change nothing.
      const step = stepSize(current.crossProduct, candidate, coefficients, p);
      if (step <= NEGLIGIBLE_STEP * (Math.abs(totals.deviance) + 0.1) || step >= previousStep) {
        finalFactor = factor;
        break;
      }
      previousStep = step;
    }
    iterations = iteration;
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
    if (!converged && Math.abs(totals.deviance - previousDeviance) / (Math.abs(totals.deviance) + 0.1) < epsilon) converged = true;
    previousDeviance = totals.deviance;
    previousCoefficients = candidate;
    [current, next] = [next, current];
  }
  if (iterations === 0) throw new InvalidStepError('no iteration was run');
  // `current` holds XᵀWX at the final coefficients' working weights.
  // (factorOrLastUsable returns null only after going back to lastUsable.)
  const factor = finalFactor ?? factorOrLastUsable() ?? lastUsable?.factor ?? null;
  if (factor === null) throw new InvalidStepError('no usable working weights at the estimate');
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
