import type { DesignMatrix } from '../design/designMatrix.js';
import type { CrossProductAccumulator } from './crossProductAccumulator.js';

/** The generalized linear models the engine fits by IRLS. */
export type GlmFamily = 'binomial-logit' | 'poisson-log' | 'binomial-log';

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

/** Slots of one row's quantities at the starting mean in {@link logisticStartPass}'s table. */
const START_SLOTS = 5;

/**
 * A row's working weight, weighted working response, deviance term, mean and boundary flag
 * (1 when μ is within 10·ε of 0 or 1) at R's binomial starting mean μ₀ = (w·y + ½)/(w + 1),
 * written to `out[offset ...]` with exactly the arithmetic of {@link logisticPass}.
 */
function logisticStartRow(prior: number, response: number, out: Float64Array, offset: number): void {
  const start = (prior * response + 0.5) / (prior + 1); // R binomial(): mustart
  const eta = Math.log(start / (1 - start));
  const e = Math.exp(-Math.abs(eta));
  const onePlus = 1 + e;
  const mean = eta >= 0 ? 1 / onePlus : e / onePlus;
  const weight = (prior * e) / (onePlus * onePlus);
  const logOnePlus = Math.log(onePlus);
  const minusLogMean = eta >= 0 ? logOnePlus : logOnePlus - eta;
  out[offset] = weight;
  out[offset + 1] = weight * eta + prior * (response - mean);
  out[offset + 2] = 2 * prior * (minusLogMean + (1 - response) * eta);
  out[offset + 3] = mean;
  out[offset + 4] = mean < BOUNDARY_EPSILON || mean > 1 - BOUNDARY_EPSILON ? 1 : 0;
}

/**
 * The first logistic pass, at R's starting means (McCullagh and Nelder 1989, §2.5, with
 * glm.fit's mustart). μ₀ depends only on a row's prior weight and outcome, so for weight 1
 * and outcome 0 or 1 (every row of an unweighted fit) the row quantities are computed once
 * and looked up, not recomputed per row: two logarithms and an exponential fewer per row,
 * and no branch on the sign of η, which follows the outcome and so is unpredictable. The
 * sums take the same terms in the same order as {@link logisticPass}, so the bits agree;
 * other weights and outcomes are computed row by row as there.
 */
function logisticStartPass(
  design: DesignMatrix,
  y: Float64Array,
  priorWeights: Float64Array | null,
  accumulator: CrossProductAccumulator,
  totals: PassTotals,
  from: number,
  to: number,
): void {
  const r = design.freeTerms.length;
  const { free, cellOfRow } = design;
  const { cellWeight, cellResponse, cellFree, freeFree, freeResponse } = accumulator;
  // [outcome 0 | outcome 1 | any other row], each START_SLOTS long.
  const table = new Float64Array(3 * START_SLOTS);
  logisticStartRow(1, 0, table, 0);
  logisticStartRow(1, 1, table, START_SLOTS);
  const otherRow = 2 * START_SLOTS;
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
    let at = otherRow;
    if (prior === 1 && (+(response === 0) | +(response === 1)) !== 0) at = START_SLOTS * response;
    else logisticStartRow(prior, response, table, otherRow);
    const weight = table[at];
    const weightedResponse = table[at + 1];
    const mean = table[at + 3];
    deviance += table[at + 2];
    boundaryCount += table[at + 4];
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
}

const logisticPass: PassFunction = (design, y, priorWeights, cellEta, freeBeta, fromStart, accumulator, totals, from, to) => {
  if (fromStart) {
    logisticStartPass(design, y, priorWeights, accumulator, totals, from, to);
    return;
  }
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
  // A rate model's offset o (log person-time): η = o + xβ, and the working response is
  // z − o (R's glm.fit: z <- (eta - offset) + (y - mu)/mu.eta).
  const offset = design.offset ?? null;
  for (let i = from; i < to; i++) {
    const prior = priorWeights === null ? 1 : priorWeights[i];
    if (prior === 0) continue;
    weightSum += prior;
    const cell = cellOfRow[i];
    const base = i * r;
    const response = y[i];
    const shift = offset === null ? 0 : offset[i];
    let eta = cellEta[cell] + shift;
    for (let k = 0; k < r; k++) eta += free[base + k] * freeBeta[k];
    if (fromStart) eta = Math.log(response + 0.1); // R poisson(): mustart = y + 0.1
    const mean = Math.exp(eta);
    const weight = prior * mean;
    const weightedResponse = weight * (eta - shift) + prior * (response - mean);
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

