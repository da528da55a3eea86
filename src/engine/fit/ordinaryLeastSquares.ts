import { choleskyFactor, choleskyInverse, choleskySolve, sandwich } from '../core/symmetricPositiveDefinite.js';
import type { DesignMatrix } from '../design/designMatrix.js';
import { createPassBuffers, executePass, setCoefficients } from './blockedPasses.js';
import {
  accumulateWeighted,
  assembleCrossProducts,
  assembleResidualCrossProduct,
  createAccumulator,
  leverages,
  linearPredictor,
} from './crossProductAccumulator.js';
import type { ParallelContext } from './iterativelyReweightedLeastSquares.js';

export interface LeastSquaresFit {
  readonly coefficients: Float64Array;
  /** (XᵀWX)⁻¹, row-major. */
  readonly crossProductInverse: Float64Array;
  /** σ̂²(XᵀWX)⁻¹. */
  readonly covarianceClassical: Float64Array;
  /** HC3 sandwich, or null when not asked for. */
  readonly covarianceHC3: Float64Array | null;
  readonly residualSumOfSquares: number;
  readonly residualDf: number;
  readonly sigmaSquared: number;
  readonly logLik: number;
  readonly weightSum: number;
  readonly smallestPivotRatio: number;
  readonly smallestPivotIndex: number;
}

export interface LeastSquaresInput {
  readonly design: DesignMatrix;
  readonly y: Float64Array;
  /** Frequency weights (bootstrap); null means 1. */
  readonly priorWeights?: Float64Array | null;
  readonly computeHC3?: boolean;
  /** Coefficients only (bootstrap replicates). */
  readonly coefficientsOnly?: boolean;
  /** Split the passes across threads. */
  readonly parallel?: ParallelContext | null;
}

/**
 * Ordinary (or frequency-weighted) least squares, β̂ = (XᵀWX)⁻¹XᵀWy, with classical and
 * HC3 standard errors.
 *
 * Variant: the normal equations are solved by a Jacobi-scaled Cholesky factor and then
 * one step of iterative refinement on the residuals (Björck, Numerical Methods for Least
 * Squares Problems, 1996, §2.9; the residual sum of squares after the step follows
 * algebraically, without another pass), which brings the coefficients to within rounding of R's
 * QR-based lm(). σ̂² = Σwe²/(Σw − p); classical Var = σ̂²(XᵀWX)⁻¹. HC3 (MacKinnon and
 * White, J Econometrics 1985;29:305-325): (XᵀX)⁻¹ Xᵀ diag(eᵢ²/(1 − hᵢᵢ)²) X (XᵀX)⁻¹ with
 * hᵢᵢ = xᵢᵀ(XᵀX)⁻¹xᵢ. Log-likelihood as R's logLik.lm: −(N/2)(log 2π + 1 − log N + log RSS).
 *
 * @throws NotPositiveDefiniteError when the design is singular.
 * @example fitOrdinaryLeastSquares({ design, y }).coefficients // [b0, b1, ...]
 */
export function fitOrdinaryLeastSquares(input: LeastSquaresInput): LeastSquaresFit {
  const { design, y } = input;
  const weights = input.priorWeights ?? null;
  const p = design.columns;
  const buffers = input.parallel?.buffers ?? createPassBuffers(design, false);
  const runner = input.parallel?.runner ?? null;
  setCoefficients(design, buffers, null);
  const { accumulator } = executePass(design, y, weights, buffers, { kind: 'weighted' }, runner);
  const crossProduct = new Float64Array(p * p);
  const crossResponse = new Float64Array(p);
  assembleCrossProducts(design, accumulator, crossProduct, crossResponse);
  const weightSum = accumulator.cellWeight.reduce((sum, value) => sum + value, 0);
  const factor = choleskyFactor(crossProduct, p);
  const coefficients = choleskySolve(factor, crossResponse);

  // One step of iterative refinement: the correction δ solves XᵀWX δ = XᵀW(y − Xβ).
  setCoefficients(design, buffers, coefficients);
  const residualPass = executePass(design, y, weights, buffers, { kind: 'residual' }, runner);
  const first = { crossResidual: assembleResidualCrossProduct(design, residualPass.accumulator), sumOfSquares: residualPass.totals.deviance };
  const delta = choleskySolve(factor, first.crossResidual);
  for (let j = 0; j < p; j++) coefficients[j] += delta[j];
  const residualDf = weightSum - p;
  const crossProductInverse = choleskyInverse(factor);
  const pivots = { smallestPivotRatio: factor.smallestPivotRatio, smallestPivotIndex: factor.smallestPivotIndex };
  if (input.coefficientsOnly) {
    return {
      coefficients, crossProductInverse, covarianceClassical: crossProductInverse, covarianceHC3: null,
      residualSumOfSquares: Number.NaN, residualDf, sigmaSquared: Number.NaN, logLik: Number.NaN, weightSum, ...pivots,
    };
  }
  // RSS at β + δ without another pass: ‖e − Xδ‖² = Σwe² − 2δᵀXᵀWe + δᵀXᵀWXδ.
  let correctionTerm = 0;
  for (let j = 0; j < p; j++) {
    let inner = 0;
    for (let k = 0; k < p; k++) inner += crossProduct[j * p + k] * delta[k];
    correctionTerm += delta[j] * (inner - 2 * first.crossResidual[j]);
  }
  const residualSumOfSquares = first.sumOfSquares + correctionTerm;
  const sigmaSquared = residualSumOfSquares / residualDf;
  const covarianceClassical = crossProductInverse.map((value) => value * sigmaSquared);

  let covarianceHC3: Float64Array | null = null;
  if (input.computeHC3 ?? true) {
    const leverage = leverages(design, crossProductInverse, weights);
    const eta = linearPredictor(design, coefficients);
    const meatWeights = new Float64Array(design.rows);
    for (let i = 0; i < design.rows; i++) {
      const weight = weights === null ? 1 : weights[i];
      if (weight === 0) continue;
      const scaled = (y[i] - eta[i]) / (1 - leverage[i]);
      meatWeights[i] = weight * scaled * scaled;
    }
    const meatAccumulator = createAccumulator(design);
    accumulateWeighted(design, meatWeights, null, meatAccumulator);
    const meat = new Float64Array(p * p);
    assembleCrossProducts(design, meatAccumulator, meat, new Float64Array(p));
    covarianceHC3 = sandwich(crossProductInverse, meat, p);
  }
  const logLik = -0.5 * weightSum * (Math.log(2 * Math.PI) + 1 - Math.log(weightSum) + Math.log(residualSumOfSquares));
  return {
    coefficients,
    crossProductInverse,
    covarianceClassical,
    covarianceHC3,
    residualSumOfSquares,
    residualDf,
    sigmaSquared,
    logLik,
    weightSum,
    ...pivots,
  };
}
