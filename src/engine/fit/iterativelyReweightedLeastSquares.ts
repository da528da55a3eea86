import { choleskyFactor, choleskyInverse, choleskySolve, type CholeskyFactor } from '../core/symmetricPositiveDefinite.js';
import type { DesignMatrix } from '../design/designMatrix.js';
import {
  assembleCrossProducts,
  cellLinearPredictor,
  createAccumulator,
  freeCoefficients,
  resetAccumulator,
  type CrossProductAccumulator,
} from './crossProductAccumulator.js';

/** The generalized linear models the engine fits by IRLS. */
export type GlmFamily = 'binomial-logit' | 'poisson-log' | 'binomial-log';

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

const BOUNDARY_EPSILON = 10 * Number.EPSILON;

export interface PassTotals {
  deviance: number;
  logLikelihood: number;
  invalid: boolean;
  boundaryCount: number;
  maxMean: number;
  weightSum: number;
}

export function newTotals(): PassTotals {
  return { deviance: 0, logLikelihood: 0, invalid: false, boundaryCount: 0, maxMean: 0, weightSum: 0 };
}

/**
 * One pass over rows [from, to): at the linear predictor (cell part + free part), or at
 * R's starting means when `fromStart`, accumulate the sums behind XᵀWX and XᵀWz for the
 * next step, with the deviance and log-likelihood at the current coefficients. Working
 * weights and responses are those of McCullagh and Nelder (1989, §2.5):
 * w = (dμ/dη)²/V(μ), z = η + (y − μ)/(dμ/dη); w·z is formed as w·η + r with
 * r = (y − μ)(dμ/dη)/V(μ) to avoid dividing by small derivatives.
 *
 * There is one copy of the loop per family so that each stays monomorphic in the JIT.
 */
export type PassFunction = (
  design: DesignMatrix,
  y: Float64Array,
  priorWeights: Float64Array | null,
  cellEta: Float64Array,
  freeBeta: Float64Array,
  fromStart: boolean,
  accumulator: CrossProductAccumulator,
  totals: PassTotals,
  from: number,
  to: number,
) => void;

const logisticPass: PassFunction = (design, y, priorWeights, cellEta, freeBeta, fromStart, accumulator, totals, from, to) => {
  const r = design.freeTerms.length;
  const { free, cellOfRow } = design;
  const { cellWeight, cellResponse, cellFree, freeFree, freeResponse } = accumulator;
  let deviance = 0;
  let boundaryCount = 0;
  let maxMean = 0;
  let weightSum = 0;
  for (let i = from; i < to; i++) {
    const prior = priorWeights === null ? 1 : priorWeights[i];
    if (prior === 0) continue;
    weightSum += prior;
    const cell = cellOfRow[i];
    const base = i * r;
    const response = y[i];
    let eta = cellEta[cell];
    for (let k = 0; k < r; k++) eta += free[base + k] * freeBeta[k];
    if (fromStart) {
      const start = (prior * response + 0.5) / (prior + 1); // R binomial(): mustart
      eta = Math.log(start / (1 - start));
    }
    const e = Math.exp(-Math.abs(eta));
    const onePlus = 1 + e;
    const mean = eta >= 0 ? 1 / onePlus : e / onePlus;
    const weight = (prior * e) / (onePlus * onePlus);
    const weightedResponse = weight * eta + prior * (response - mean);
    // −log μ = log(1 + e^(−η)) and −log(1 − μ) = log(1 + e^η), without overflow.
    const logOnePlus = Math.log(onePlus);
    const minusLogMean = eta >= 0 ? logOnePlus : logOnePlus - eta;
    deviance += 2 * prior * (minusLogMean + (1 - response) * eta);
    if (mean < BOUNDARY_EPSILON || mean > 1 - BOUNDARY_EPSILON) boundaryCount++;
    if (mean > maxMean) maxMean = mean;
    cellWeight[cell] += weight;
    cellResponse[cell] += weightedResponse;
    const cellBase = cell * r;
    for (let k = 0; k < r; k++) {
      const value = free[base + k];
      const weighted = weight * value;
      cellFree[cellBase + k] += weighted;
      freeResponse[k] += value * weightedResponse;
      const rowStart = k * r;
      for (let l = k; l < r; l++) freeFree[rowStart + l] += weighted * free[base + l];
    }
  }
  totals.deviance += deviance;
  totals.logLikelihood += -0.5 * deviance; // 0/1 outcomes: the saturated log-likelihood is 0
  totals.boundaryCount += boundaryCount;
  totals.maxMean = Math.max(totals.maxMean, maxMean);
  totals.weightSum += weightSum;
};

/** ln(y!) for a non-negative integer count (0 for y ≤ 1). */
function logFactorial(value: number): number {
  let total = 0;
  for (let k = 2; k <= value; k++) total += Math.log(k);
  return total;
}

const poissonPass: PassFunction = (design, y, priorWeights, cellEta, freeBeta, fromStart, accumulator, totals, from, to) => {
  const r = design.freeTerms.length;
  const { free, cellOfRow } = design;
  const { cellWeight, cellResponse, cellFree, freeFree, freeResponse } = accumulator;
  let deviance = 0;
  let logLikelihood = 0;
  let maxMean = 0;
  let weightSum = 0;
  for (let i = from; i < to; i++) {
    const prior = priorWeights === null ? 1 : priorWeights[i];
    if (prior === 0) continue;
    weightSum += prior;
    const cell = cellOfRow[i];
    const base = i * r;
    const response = y[i];
    let eta = cellEta[cell];
    for (let k = 0; k < r; k++) eta += free[base + k] * freeBeta[k];
    if (fromStart) eta = Math.log(response + 0.1); // R poisson(): mustart = y + 0.1
    const mean = Math.exp(eta);
    const weight = prior * mean;
    const weightedResponse = weight * eta + prior * (response - mean);
    if (response > 0) {
      deviance += 2 * prior * (response * (Math.log(response) - eta) - (response - mean));
      logLikelihood += prior * (response * eta - mean - logFactorial(response));
    } else {
      deviance += 2 * prior * mean;
      logLikelihood -= prior * mean;
    }
    if (mean > maxMean) maxMean = mean;
    cellWeight[cell] += weight;
    cellResponse[cell] += weightedResponse;
    const cellBase = cell * r;
    for (let k = 0; k < r; k++) {
      const value = free[base + k];
      const weighted = weight * value;
      cellFree[cellBase + k] += weighted;
      freeResponse[k] += value * weightedResponse;
      const rowStart = k * r;
      for (let l = k; l < r; l++) freeFree[rowStart + l] += weighted * free[base + l];
    }
  }
  totals.deviance += deviance;
  totals.logLikelihood += logLikelihood;
  totals.maxMean = Math.max(totals.maxMean, maxMean);
  totals.weightSum += weightSum;
};

const logBinomialPass: PassFunction = (design, y, priorWeights, cellEta, freeBeta, fromStart, accumulator, totals, from, to) => {
  const r = design.freeTerms.length;
  const { free, cellOfRow } = design;
  const { cellWeight, cellResponse, cellFree, freeFree, freeResponse } = accumulator;
  let deviance = 0;
  let boundaryCount = 0;
  let maxMean = 0;
  let weightSum = 0;
  let invalid = false;
  for (let i = from; i < to; i++) {
    const prior = priorWeights === null ? 1 : priorWeights[i];
    if (prior === 0) continue;
    weightSum += prior;
    const cell = cellOfRow[i];
    const base = i * r;
    const response = y[i];
    let eta = cellEta[cell];
    for (let k = 0; k < r; k++) eta += free[base + k] * freeBeta[k];
    if (fromStart) eta = Math.log((prior * response + 0.5) / (prior + 1));
    const mean = Math.exp(eta);
    if (mean > maxMean) maxMean = mean;
    if (!(mean < 1)) {
      invalid = true; // R's binomial validmu: 0 < μ < 1
      continue;
    }
    const complement = 1 - mean;
    const weight = (prior * mean) / complement;
    const weightedResponse = weight * eta + (prior * (response - mean)) / complement;
    deviance += 2 * prior * (-response * eta - (1 - response) * Math.log(complement));
    if (mean < BOUNDARY_EPSILON || mean > 1 - BOUNDARY_EPSILON) boundaryCount++;
    cellWeight[cell] += weight;
    cellResponse[cell] += weightedResponse;
    const cellBase = cell * r;
    for (let k = 0; k < r; k++) {
      const value = free[base + k];
      const weighted = weight * value;
      cellFree[cellBase + k] += weighted;
      freeResponse[k] += value * weightedResponse;
      const rowStart = k * r;
      for (let l = k; l < r; l++) freeFree[rowStart + l] += weighted * free[base + l];
    }
  }
  totals.deviance += deviance;
  totals.logLikelihood += -0.5 * deviance;
  totals.boundaryCount += boundaryCount;
  totals.maxMean = Math.max(totals.maxMean, maxMean);
  totals.weightSum += weightSum;
  totals.invalid = totals.invalid || invalid;
};

export const PASS_FUNCTIONS: Readonly<Record<GlmFamily, PassFunction>> = {
  'binomial-logit': logisticPass,
  'poisson-log': poissonPass,
  'binomial-log': logBinomialPass,
};

/** Workspace of one fit, reused across its iterations. */
interface Workspace {
  accumulator: CrossProductAccumulator;
  crossProduct: Float64Array;
  crossResponse: Float64Array;
  cellEta: Float64Array;
  freeBeta: Float64Array;
}

function createWorkspace(design: DesignMatrix): Workspace {
  const p = design.columns;
  return {
    accumulator: createAccumulator(design),
    crossProduct: new Float64Array(p * p),
    crossResponse: new Float64Array(p),
    cellEta: new Float64Array(design.cellCount),
    freeBeta: new Float64Array(design.freeTerms.length),
  };
}

function runPass(input: GlmInput, coefficients: Float64Array | null, workspace: Workspace): PassTotals {
  const { design } = input;
  resetAccumulator(workspace.accumulator);
  if (coefficients !== null) {
    cellLinearPredictor(design, coefficients, workspace.cellEta);
    freeCoefficients(design, coefficients, workspace.freeBeta);
  } else {
    workspace.cellEta.fill(0);
    workspace.freeBeta.fill(0);
  }
  const totals = newTotals();
  PASS_FUNCTIONS[input.family](
    design, input.y, input.priorWeights ?? null, workspace.cellEta, workspace.freeBeta,
    coefficients === null, workspace.accumulator, totals, 0, design.rows,
  );
  assembleCrossProducts(design, workspace.accumulator, workspace.crossProduct, workspace.crossResponse);
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
 * R's summary.glm does.
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

  let previousCoefficients: Float64Array | null = input.start ? Float64Array.from(input.start) : null;
  let totals = runPass(input, previousCoefficients, current);
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
    let candidateTotals = runPass(input, candidate, next);
    let halvings = 0;
    while (candidateTotals.invalid || !Number.isFinite(candidateTotals.deviance)) {
      if (previousCoefficients === null) throw new InvalidStepError('no valid set of coefficients was found; supply starting values');
      if (++halvings > maxIterations) throw new InvalidStepError('step-halving could not find valid fitted means');
      boundary = true;
      const halved = new Float64Array(p);
      for (let j = 0; j < p; j++) halved[j] = 0.5 * (candidate[j] + previousCoefficients[j]);
      candidate = halved;
      candidateTotals = runPass(input, candidate, next);
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
