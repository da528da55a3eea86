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

