import type { DesignMatrix } from '../design/designMatrix.js';

/**
 * Running sums of a weighted cross-product pass over a {@link DesignMatrix}: per cell the
 * weight and weighted response, per cell the weighted free terms, and the free × free
 * block. {@link assembleCrossProducts} turns them into XᵀWX and XᵀWz.
 */
export interface CrossProductAccumulator {
  readonly cellWeight: Float64Array;
  readonly cellResponse: Float64Array;
  /** cellCount × r: Σ_{i in cell} wᵢ fᵢₖ. */
  readonly cellFree: Float64Array;
  /** r × r upper triangle: Σ wᵢ fᵢₖ fᵢₗ. */
  readonly freeFree: Float64Array;
  /** Σ fᵢₖ (w z)ᵢ. */
  readonly freeResponse: Float64Array;
}

export function createAccumulator(design: DesignMatrix): CrossProductAccumulator {
  const r = design.freeTerms.length;
  return {
    cellWeight: new Float64Array(design.cellCount),
    cellResponse: new Float64Array(design.cellCount),
    cellFree: new Float64Array(design.cellCount * r),
    freeFree: new Float64Array(r * r),
    freeResponse: new Float64Array(r),
  };
}

export function resetAccumulator(accumulator: CrossProductAccumulator): void {
  accumulator.cellWeight.fill(0);
  accumulator.cellResponse.fill(0);
  accumulator.cellFree.fill(0);
  accumulator.freeFree.fill(0);
  accumulator.freeResponse.fill(0);
}

/** Adds `source` into `target` (used to combine the partial sums of worker threads). */
export function addAccumulator(target: CrossProductAccumulator, source: CrossProductAccumulator): void {
  const pairs: [Float64Array, Float64Array][] = [
    [target.cellWeight, source.cellWeight],
    [target.cellResponse, source.cellResponse],
    [target.cellFree, source.cellFree],
    [target.freeFree, source.freeFree],
    [target.freeResponse, source.freeResponse],
  ];
  for (const [into, from] of pairs) for (let k = 0; k < into.length; k++) into[k] += from[k];
}

/**
 * XᵀWX (full, symmetric, row-major p × p) and XᵀWz from the accumulated sums:
 * cell × cell: Σ_c S_c u_c u_cᵀ; cell × free: Σ_c u_c (Σ w f)_cᵀ; free × free as summed.
 */
export function assembleCrossProducts(
  design: DesignMatrix,
  accumulator: CrossProductAccumulator,
  crossProduct: Float64Array,
  crossResponse: Float64Array,
): void {
  const p = design.columns;
  const q = design.cellTerms.length;
  const r = design.freeTerms.length;
  const { cellTerms, freeTerms, cellValues } = design;
  crossProduct.fill(0);
  crossResponse.fill(0);
  for (let cell = 0; cell < design.cellCount; cell++) {
    const weight = accumulator.cellWeight[cell];
    const response = accumulator.cellResponse[cell];
    const base = cell * q;
    const freeBase = cell * r;
    if (weight === 0 && response === 0) continue;
    for (let t = 0; t < q; t++) {
      const value = cellValues[base + t];
      if (value === 0) continue;
      const row = cellTerms[t];
      crossResponse[row] += value * response;
      for (let u = 0; u < q; u++) {
        const other = cellValues[base + u];
        if (other !== 0) crossProduct[row * p + cellTerms[u]] += weight * value * other;
      }
      for (let k = 0; k < r; k++) {
        const sum = value * accumulator.cellFree[freeBase + k];
        crossProduct[row * p + freeTerms[k]] += sum;
        crossProduct[freeTerms[k] * p + row] += sum;
      }
    }
  }
  for (let k = 0; k < r; k++) {
    crossResponse[freeTerms[k]] += accumulator.freeResponse[k];
    for (let l = k; l < r; l++) {
      const sum = accumulator.freeFree[k * r + l];
      crossProduct[freeTerms[k] * p + freeTerms[l]] += sum;
      if (l !== k) crossProduct[freeTerms[l] * p + freeTerms[k]] += sum;
    }
  }
}

/** Linear predictor of each cell's cell terms, Σ_t u_ct β_{cellTerms[t]}. */
export function cellLinearPredictor(design: DesignMatrix, coefficients: ArrayLike<number>, out: Float64Array): Float64Array {
  const q = design.cellTerms.length;
  for (let cell = 0; cell < design.cellCount; cell++) {
    let eta = 0;
    for (let t = 0; t < q; t++) eta += design.cellValues[cell * q + t] * coefficients[design.cellTerms[t]];
    out[cell] = eta;
  }
  return out;
}

/** The coefficients of the free terms, in free order. */
export function freeCoefficients(design: DesignMatrix, coefficients: ArrayLike<number>, out: Float64Array): Float64Array {
  for (let k = 0; k < design.freeTerms.length; k++) out[k] = coefficients[design.freeTerms[k]];
  return out;
}

/** Linear predictor x_iᵀβ of every row. */
export function linearPredictor(design: DesignMatrix, coefficients: ArrayLike<number>): Float64Array {
  const r = design.freeTerms.length;
  const cellEta = cellLinearPredictor(design, coefficients, new Float64Array(design.cellCount));
  const freeBeta = freeCoefficients(design, coefficients, new Float64Array(r));
  const eta = new Float64Array(design.rows);
  const { free, cellOfRow } = design;
  for (let i = 0; i < design.rows; i++) {
    let value = cellEta[cellOfRow[i]];
    const base = i * r;
    for (let k = 0; k < r; k++) value += free[base + k] * freeBeta[k];
    eta[i] = value;
  }
  const offset = design.offset;
  if (offset) for (let i = 0; i < design.rows; i++) eta[i] += offset[i];
  return eta;
}

/**
 * One weighted pass: accumulates Σ wᵢ xᵢxᵢᵀ and Σ wᵢ zᵢ xᵢ for given row weights and
 * responses (z may be null for a cross product only). Used by least squares and by the
 * "meat" of sandwich variances; the IRLS passes inline the same accumulation.
 */
export function accumulateWeighted(
  design: DesignMatrix,
  weights: Float64Array | null,
  responses: Float64Array | null,
  accumulator: CrossProductAccumulator,
  from = 0,
  to = design.rows,
): void {
  const r = design.freeTerms.length;
  if (weights === null && responses !== null && r === 3) {
    accumulateUnweightedThreeFree(design, responses, accumulator, from, to);
    return;
  }
  const { free, cellOfRow } = design;
  const { cellWeight, cellResponse, cellFree, freeFree, freeResponse } = accumulator;
  for (let i = from; i < to; i++) {
    const weight = weights === null ? 1 : weights[i];
    if (weight === 0) continue;
    const weightedResponse = responses === null ? 0 : weight * responses[i];
    const cell = cellOfRow[i];
    cellWeight[cell] += weight;
    cellResponse[cell] += weightedResponse;
    const base = i * r;
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
}

/**
 * One fused pass for least squares over rows [from, to): residuals eᵢ = yᵢ − xᵢᵀβ (not
 * stored, β given as per-cell and free parts), accumulating Σ wᵢeᵢ per cell into
 * `cellResponse`, Σ fᵢₖwᵢeᵢ into `freeResponse`; returns Σ wᵢeᵢ².
 */
export function accumulateResiduals(
  design: DesignMatrix,
  weights: Float64Array | null,
  y: Float64Array,
  cellEta: Float64Array,
  freeBeta: Float64Array,
  accumulator: CrossProductAccumulator,
  from: number,
  to: number,
): number {
  const r = design.freeTerms.length;
  if (weights === null && r === 3) return accumulateUnweightedResidualsThreeFree(design, y, cellEta, freeBeta, accumulator, from, to);
  const { free, cellOfRow } = design;
  const { cellResponse, freeResponse } = accumulator;
  let sumOfSquares = 0;
  for (let i = from; i < to; i++) {
    const weight = weights === null ? 1 : weights[i];
    if (weight === 0) continue;
    const cell = cellOfRow[i];
    const base = i * r;
    let fitted = cellEta[cell];
    for (let k = 0; k < r; k++) fitted += free[base + k] * freeBeta[k];
    const residual = y[i] - fitted;
    const weighted = weight * residual;
    sumOfSquares += weighted * residual;
    cellResponse[cell] += weighted;
    for (let k = 0; k < r; k++) freeResponse[k] += free[base + k] * weighted;
  }
  return sumOfSquares;
}

/*
 * Unrolled kernels for unit weights and three free terms (a linear model with two
 * continuous variables and their product, or one continuous modifier with its product and
 * a continuous covariate). They do exactly the additions of the general loops above, in the
 * same row order and with the same operands (a weight of 1 multiplies exactly, so it is
 * left out), so their sums are bit-identical; they only keep the sums in locals instead of
 * arrays, drop the weight branch and, with one cell, the per-row cell lookup. On 1,000,000
 * rows this takes a least-squares pass from about 13 ms to about 3–4 ms on one thread.
 *
 * They are called on chunks of KERNEL_ROWS rows rather than on a whole block: a kernel
 * called many times is optimised as a whole function, while one long loop is optimised
 * mid-loop before the code after it has run, and that code then deoptimises when first
 * reached.
 */
const KERNEL_ROWS = 4096;

/** {@link accumulateWeighted} with weights 1, responses given and r = 3. */
function accumulateUnweightedThreeFree(
  design: DesignMatrix,
  responses: Float64Array,
  accumulator: CrossProductAccumulator,
  from: number,
  to: number,
): void {
  const kernel = design.cellCount === 1 ? weightedOneCellThreeFree : weightedCellsThreeFree;
  for (let start = from; start < to; start += KERNEL_ROWS) kernel(design, responses, accumulator, start, Math.min(to, start + KERNEL_ROWS));
}

function weightedOneCellThreeFree(design: DesignMatrix, responses: Float64Array, accumulator: CrossProductAccumulator, from: number, to: number): void {
  const free = design.free;
  const { cellWeight, cellResponse, cellFree, freeFree, freeResponse } = accumulator;
  let cw = cellWeight[0], cr = cellResponse[0];
  let cf0 = cellFree[0], cf1 = cellFree[1], cf2 = cellFree[2];
  let ff00 = freeFree[0], ff01 = freeFree[1], ff02 = freeFree[2];
  let ff11 = freeFree[4], ff12 = freeFree[5], ff22 = freeFree[8];
  let fr0 = freeResponse[0], fr1 = freeResponse[1], fr2 = freeResponse[2];
  for (let i = from, base = 3 * from; i < to; i++, base += 3) {
    const response = responses[i];
    const f0 = free[base], f1 = free[base + 1], f2 = free[base + 2];
    cw += 1;
    cr += response;
    cf0 += f0;
    fr0 += f0 * response;
    ff00 += f0 * f0;
    ff01 += f0 * f1;
    ff02 += f0 * f2;
    cf1 += f1;
    fr1 += f1 * response;
    ff11 += f1 * f1;
    ff12 += f1 * f2;
    cf2 += f2;
    fr2 += f2 * response;
    ff22 += f2 * f2;
  }
  cellWeight[0] = cw;
  cellResponse[0] = cr;
  cellFree[0] = cf0;
  cellFree[1] = cf1;
  cellFree[2] = cf2;
  freeFree[0] = ff00;
  freeFree[1] = ff01;
  freeFree[2] = ff02;
  freeFree[4] = ff11;
  freeFree[5] = ff12;
  freeFree[8] = ff22;
  freeResponse[0] = fr0;
  freeResponse[1] = fr1;
  freeResponse[2] = fr2;
}

function weightedCellsThreeFree(design: DesignMatrix, responses: Float64Array, accumulator: CrossProductAccumulator, from: number, to: number): void {
  const { free, cellOfRow } = design;
  const { cellWeight, cellResponse, cellFree, freeFree, freeResponse } = accumulator;
  let ff00 = freeFree[0], ff01 = freeFree[1], ff02 = freeFree[2];
  let ff11 = freeFree[4], ff12 = freeFree[5], ff22 = freeFree[8];
  let fr0 = freeResponse[0], fr1 = freeResponse[1], fr2 = freeResponse[2];
  for (let i = from, base = 3 * from; i < to; i++, base += 3) {
    const response = responses[i];
    const cell = cellOfRow[i];
    const cellBase = 3 * cell;
    const f0 = free[base], f1 = free[base + 1], f2 = free[base + 2];
    cellWeight[cell] += 1;
    cellResponse[cell] += response;
    cellFree[cellBase] += f0;
    fr0 += f0 * response;
    ff00 += f0 * f0;
    ff01 += f0 * f1;
    ff02 += f0 * f2;
    cellFree[cellBase + 1] += f1;
    fr1 += f1 * response;
    ff11 += f1 * f1;
    ff12 += f1 * f2;
    cellFree[cellBase + 2] += f2;
    fr2 += f2 * response;
    ff22 += f2 * f2;
  }
  freeFree[0] = ff00;
  freeFree[1] = ff01;
  freeFree[2] = ff02;
  freeFree[4] = ff11;
  freeFree[5] = ff12;
  freeFree[8] = ff22;
  freeResponse[0] = fr0;
  freeResponse[1] = fr1;
  freeResponse[2] = fr2;
}

/** {@link accumulateResiduals} with weights 1 and r = 3. */
function accumulateUnweightedResidualsThreeFree(
  design: DesignMatrix,
  y: Float64Array,
  cellEta: Float64Array,
  freeBeta: Float64Array,
  accumulator: CrossProductAccumulator,
  from: number,
  to: number,
): number {
  const kernel = design.cellCount === 1 ? residualsOneCellThreeFree : residualsCellsThreeFree;
  // The running sum of squares goes through the kernels so that it is one sum in row order.
  let sumOfSquares = 0;
  for (let start = from; start < to; start += KERNEL_ROWS) {
    sumOfSquares = kernel(design, y, cellEta, freeBeta, accumulator, start, Math.min(to, start + KERNEL_ROWS), sumOfSquares);
  }
  return sumOfSquares;
}

function residualsOneCellThreeFree(
  design: DesignMatrix, y: Float64Array, cellEta: Float64Array, freeBeta: Float64Array,
  accumulator: CrossProductAccumulator, from: number, to: number, sumSoFar: number,
): number {
  const free = design.free;
  const { cellResponse, freeResponse } = accumulator;
  const eta = cellEta[0];
  const b0 = freeBeta[0], b1 = freeBeta[1], b2 = freeBeta[2];
  let cr = cellResponse[0];
  let fr0 = freeResponse[0], fr1 = freeResponse[1], fr2 = freeResponse[2];
  let sumOfSquares = sumSoFar;
  for (let i = from, base = 3 * from; i < to; i++, base += 3) {
    const f0 = free[base], f1 = free[base + 1], f2 = free[base + 2];
    let fitted = eta;
    fitted += f0 * b0;
    fitted += f1 * b1;
    fitted += f2 * b2;
    const residual = y[i] - fitted;
    sumOfSquares += residual * residual;
    cr += residual;
    fr0 += f0 * residual;
    fr1 += f1 * residual;
    fr2 += f2 * residual;
  }
  cellResponse[0] = cr;
  freeResponse[0] = fr0;
  freeResponse[1] = fr1;
  freeResponse[2] = fr2;
  return sumOfSquares;
}

function residualsCellsThreeFree(
  design: DesignMatrix, y: Float64Array, cellEta: Float64Array, freeBeta: Float64Array,
  accumulator: CrossProductAccumulator, from: number, to: number, sumSoFar: number,
): number {
  const { free, cellOfRow } = design;
  const { cellResponse, freeResponse } = accumulator;
  const b0 = freeBeta[0], b1 = freeBeta[1], b2 = freeBeta[2];
  let fr0 = freeResponse[0], fr1 = freeResponse[1], fr2 = freeResponse[2];
  let sumOfSquares = sumSoFar;
  for (let i = from, base = 3 * from; i < to; i++, base += 3) {
    const cell = cellOfRow[i];
    const f0 = free[base], f1 = free[base + 1], f2 = free[base + 2];
    let fitted = cellEta[cell];
    fitted += f0 * b0;
    fitted += f1 * b1;
    fitted += f2 * b2;
    const residual = y[i] - fitted;
    sumOfSquares += residual * residual;
    cellResponse[cell] += residual;
    fr0 += f0 * residual;
    fr1 += f1 * residual;
    fr2 += f2 * residual;
  }
  freeResponse[0] = fr0;
  freeResponse[1] = fr1;
  freeResponse[2] = fr2;
  return sumOfSquares;
}

/** Xᵀ W e in term order from residual sums accumulated by {@link accumulateResiduals}. */
export function assembleResidualCrossProduct(design: DesignMatrix, accumulator: CrossProductAccumulator): Float64Array {
  const q = design.cellTerms.length;
  const r = design.freeTerms.length;
  const crossResidual = new Float64Array(design.columns);
  for (let cell = 0; cell < design.cellCount; cell++) {
    const value = accumulator.cellResponse[cell];
    if (value === 0) continue;
    for (let t = 0; t < q; t++) crossResidual[design.cellTerms[t]] += design.cellValues[cell * q + t] * value;
  }
  for (let k = 0; k < r; k++) crossResidual[design.freeTerms[k]] += accumulator.freeResponse[k];
  return crossResidual;
}

/**
 * Leverages hᵢ = wᵢ·xᵢᵀ A⁻¹ xᵢ for a symmetric p × p A⁻¹ (row-major), using the split
 * design: per cell the cell-block quadratic form and the cell × free coupling, per row
 * only the free block.
 */
export function leverages(design: DesignMatrix, inverse: Float64Array, weights: Float64Array | null): Float64Array {
  const p = design.columns;
  const q = design.cellTerms.length;
  const r = design.freeTerms.length;
  const { cellTerms, freeTerms, cellValues, free, cellOfRow } = design;
  const cellQuadratic = new Float64Array(design.cellCount);
  const cellCoupling = new Float64Array(design.cellCount * r);
  for (let cell = 0; cell < design.cellCount; cell++) {
    let quadratic = 0;
    for (let t = 0; t < q; t++) {
      const value = cellValues[cell * q + t];
      if (value === 0) continue;
      for (let u = 0; u < q; u++) quadratic += value * cellValues[cell * q + u] * inverse[cellTerms[t] * p + cellTerms[u]];
      for (let k = 0; k < r; k++) cellCoupling[cell * r + k] += 2 * value * inverse[cellTerms[t] * p + freeTerms[k]];
    }
    cellQuadratic[cell] = quadratic;
  }
  const freeBlock = new Float64Array(r * r);
  for (let k = 0; k < r; k++) for (let l = 0; l < r; l++) freeBlock[k * r + l] = inverse[freeTerms[k] * p + freeTerms[l]];
  const result = new Float64Array(design.rows);
  for (let i = 0; i < design.rows; i++) {
    const cell = cellOfRow[i];
    const base = i * r;
    let value = cellQuadratic[cell];
    for (let k = 0; k < r; k++) {
      const fk = free[base + k];
      let inner = cellCoupling[cell * r + k];
      for (let l = 0; l < r; l++) inner += freeBlock[k * r + l] * free[base + l];
      value += fk * inner;
    }
    result[i] = (weights === null ? 1 : weights[i]) * value;
  }
  return result;
}
