import { buildDesignMatrix, type DesignMatrix } from './designMatrix.js';
import type { AnalysisFrame } from './analysisFrame.js';

/**
 * The design of the model without the intervention × modifier products (for the omnibus
 * test's reduced fit), taken from the full design when every product is a cell term (a
 * categorical modifier): the rows' cells and the free block are shared as they are (no
 * pass over the rows, no copy), and the cell values lose the product columns. Its arrays
 * are then exactly those `buildDesignMatrix(frame, { includeProducts: false })` builds
 * (the cells do not depend on the products), so a fit on it gives the same bits. With a
 * continuous modifier (products among the free terms) the design is built afresh.
 */
export function designWithoutProducts(frame: AnalysisFrame, full: DesignMatrix): DesignMatrix {
  const products = new Set(full.productIndices);
  const freeProducts = Array.from(full.freeTerms).some((term) => products.has(term));
  if (products.size === 0 || freeProducts) return buildDesignMatrix(frame, { includeProducts: false, centre: full.centre });
  // New index of every kept term (products removed, the rest keep their order).
  const renumber = new Int32Array(full.columns).fill(-1);
  let kept = 0;
  for (let j = 0; j < full.columns; j++) if (!products.has(j)) renumber[j] = kept++;
  const keptCellPositions: number[] = [];
  full.cellTerms.forEach((term, t) => {
    if (!products.has(term)) keptCellPositions.push(t);
  });
  const q = full.cellTerms.length;
  const reducedQ = keptCellPositions.length;
  const cellValues = new Float64Array(full.cellCount * reducedQ);
  for (let cell = 0; cell < full.cellCount; cell++) {
    for (let t = 0; t < reducedQ; t++) cellValues[cell * reducedQ + t] = full.cellValues[cell * q + keptCellPositions[t]];
  }
  return {
    rows: full.rows,
    columns: kept,
    terms: full.terms.filter((_, j) => !products.has(j)),
    cellCount: full.cellCount,
    cellOfRow: full.cellOfRow,
    cellTerms: Int32Array.from(keptCellPositions, (t) => renumber[full.cellTerms[t]]),
    cellValues,
    freeTerms: full.freeTerms.map((term) => renumber[term]),
    free: full.free,
    exposureIndex: renumber[full.exposureIndex],
    modifierIndices: full.modifierIndices.map((index) => renumber[index]),
    productIndices: [],
    covariateIndices: full.covariateIndices.map((index) => renumber[index]),
    centre: full.centre,
    offset: full.offset ?? null,
  };
}
