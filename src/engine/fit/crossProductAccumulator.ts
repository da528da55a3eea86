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
