import { describe, expect, it } from 'vitest';
import type { DesignMatrix } from '../design/designMatrix.js';
import { Xoshiro128StarStar } from '../random/xoshiro128StarStar.js';
import { accumulateResiduals, accumulateWeighted, createAccumulator, type CrossProductAccumulator } from './crossProductAccumulator.js';

/** A design with `cells` cells and three continuous free terms (x, z, x·z), seeded. */
function designWithThreeFree(rows: number, cells: number, seed: number): { design: DesignMatrix; y: Float64Array } {
  const g = Xoshiro128StarStar.forStream(seed, 0);
  const free = new Float64Array(rows * 3);
  const cellOfRow = new Int32Array(rows);
  const y = new Float64Array(rows);
  for (let i = 0; i < rows; i++) {
    const x = g.nextNormal(), z = 3 + g.nextNormal();
    free[3 * i] = x;
    free[3 * i + 1] = z;
    free[3 * i + 2] = x * z;
    cellOfRow[i] = g.nextBelow(cells);
    y[i] = 1 + 0.5 * x + 0.3 * z + 0.2 * x * z + 0.1 * cellOfRow[i] + g.nextNormal();
  }
  const cellValues = new Float64Array(cells * 2);
  for (let c = 0; c < cells; c++) cellValues.set([1, c > 0 ? 1 : 0], 2 * c);
  const design: DesignMatrix = {
    rows, columns: 5,
    terms: ['(Intercept)', 'a', 'x', 'z', 'x × z'].map((name) => ({ name, role: 'covariate' as const, column: null, level: null })),
    cellCount: cells, cellOfRow, cellTerms: Int32Array.of(0, 1), cellValues,
    freeTerms: Int32Array.of(2, 3, 4), free, exposureIndex: 1, modifierIndices: [2], productIndices: [4], covariateIndices: [], centre: 0,
  };
  return { design, y };
}

function bits(accumulator: CrossProductAccumulator): string[] {
  return [accumulator.cellWeight, accumulator.cellResponse, accumulator.cellFree, accumulator.freeFree, accumulator.freeResponse]
    .map((array) => Buffer.from(array.buffer, array.byteOffset, array.byteLength).toString('hex'));
}

describe('unit-weight kernels for three free terms', () => {
  // The unrolled kernels (weights null, r = 3) must give the very bits of the general loops,
  // which run when the weights are given explicitly as ones.
  for (const cells of [1, 3]) {
    it(`match the general loops bit for bit (${cells} cell${cells > 1 ? 's' : ''}, ranges not aligned to the kernel chunks)`, () => {
      const rows = 20_011;
      const { design, y } = designWithThreeFree(rows, cells, 7 + cells);
      const ones = new Float64Array(rows).fill(1);
      const ranges: [number, number][] = [[0, rows], [5, 9000], [13, 14]];
      for (const [from, to] of ranges) {
        const fast = createAccumulator(design), general = createAccumulator(design);
        // Start from non-zero sums, as when blocks are added into one accumulator.
        for (const target of [fast, general]) { target.freeFree[1] = 0.25; target.cellFree[0] = -1.5; }
        accumulateWeighted(design, null, y, fast, from, to);
        accumulateWeighted(design, ones, y, general, from, to);
        expect(bits(fast)).toEqual(bits(general));

        const cellEta = Float64Array.from({ length: cells }, (_, c) => 0.9 + 0.1 * c);
        const freeBeta = Float64Array.of(0.49, 0.31, 0.21);
        const fastResiduals = createAccumulator(design), generalResiduals = createAccumulator(design);
        const fastSum = accumulateResiduals(design, null, y, cellEta, freeBeta, fastResiduals, from, to);
        const generalSum = accumulateResiduals(design, ones, y, cellEta, freeBeta, generalResiduals, from, to);
        expect(Object.is(fastSum, generalSum)).toBe(true);
        expect(bits(fastResiduals)).toEqual(bits(generalResiduals));
      }
    });
  }
});
