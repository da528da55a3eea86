import type { DesignMatrix } from '../design/designMatrix.js';
import {
  accumulateResiduals,
  accumulateWeighted,
  addAccumulator,
  cellLinearPredictor,
  createAccumulator,
  freeCoefficients,
  type CrossProductAccumulator,
} from './crossProductAccumulator.js';
import { PASS_FUNCTIONS, newTotals, type GlmFamily, type PassTotals } from './glmPasses.js';

/**
 * Every pass over the rows is cut into fixed blocks of BLOCK_ROWS rows whose partial sums
 * are added in block order. The order of additions therefore depends only on the data,
 * never on how many threads computed the blocks: a fit gives the same bits on one core or
 * many (an audited re-run on another machine reproduces it exactly).
 */
export const BLOCK_ROWS = 65536;

export type PassCommand =
  | { readonly kind: 'glm'; readonly family: GlmFamily; readonly fromStart: boolean }
  | { readonly kind: 'weighted' }
  | { readonly kind: 'residual' };

/** Shared buffers of one design's passes: per-block partial sums and the coefficients. */
export interface PassBuffers {
  readonly blocks: number;
  readonly slotSize: number;
  /** blocks × slotSize partial sums: [cellWeight C | cellResponse C | cellFree C·r | freeFree r² | freeResponse r | totals 6]. */
  readonly slots: Float64Array;
  /** [cellEta C | freeBeta r]: the current coefficients split as the passes use them. */
  readonly params: Float64Array;
}

/** Something that computes some blocks on other threads (see threads/passPool.ts). */
export interface ParallelPassRunner {
  /** Number of threads including the caller's; the caller computes blocks b with b % threads = 0. */
  readonly threads: number;
  /** Starts the other threads' blocks of `command` (they read the attached buffers). */
  start(command: PassCommand): void;
  /** Waits until they are done. @throws Error if a helper failed. */
  finish(): void;
}

const TOTALS = 6;

export function createPassBuffers(design: DesignMatrix, shared: boolean): PassBuffers {
  const c = design.cellCount;
  const r = design.freeTerms.length;
  const blocks = Math.max(1, Math.ceil(design.rows / BLOCK_ROWS));
  const slotSize = 2 * c + c * r + r * r + r + TOTALS;
  const allocate = (length: number) => (shared ? new Float64Array(new SharedArrayBuffer(length * 8)) : new Float64Array(length));
  return { blocks, slotSize, slots: allocate(blocks * slotSize), params: allocate(c + r) };
}

/** Views of one block's slot as an accumulator, plus the offset of its totals. */
export function slotAccumulator(design: DesignMatrix, buffers: PassBuffers, block: number): { accumulator: CrossProductAccumulator; totalsOffset: number } {
  const c = design.cellCount;
  const r = design.freeTerms.length;
  let offset = block * buffers.slotSize;
  const take = (length: number) => {
    const view = buffers.slots.subarray(offset, offset + length);
    offset += length;
    return view;
  };
  const accumulator = { cellWeight: take(c), cellResponse: take(c), cellFree: take(c * r), freeFree: take(r * r), freeResponse: take(r) };
  return { accumulator, totalsOffset: offset };
}

/** Computes block `block` of a pass into its slot (the same code runs on every thread). */
export function runBlock(
  design: DesignMatrix,
  y: Float64Array,
  priorWeights: Float64Array | null,
  buffers: PassBuffers,
  command: PassCommand,
  block: number,
): void {
  const c = design.cellCount;
  const r = design.freeTerms.length;
  const { accumulator, totalsOffset } = slotAccumulator(design, buffers, block);
  buffers.slots.fill(0, block * buffers.slotSize, (block + 1) * buffers.slotSize);
  const from = block * BLOCK_ROWS;
  const to = Math.min(design.rows, from + BLOCK_ROWS);
  const cellEta = buffers.params.subarray(0, c);
  const freeBeta = buffers.params.subarray(c, c + r);
  const totals = newTotals();
  if (command.kind === 'glm') {
    PASS_FUNCTIONS[command.family](design, y, priorWeights, cellEta, freeBeta, command.fromStart, accumulator, totals, from, to);
  } else if (command.kind === 'weighted') {
    accumulateWeighted(design, priorWeights, y, accumulator, from, to);
  } else {
    totals.deviance = accumulateResiduals(design, priorWeights, y, cellEta, freeBeta, accumulator, from, to);
  }
  const out = buffers.slots;
  out[totalsOffset] = totals.deviance;
  out[totalsOffset + 1] = totals.logLikelihood;
  out[totalsOffset + 2] = totals.invalid ? 1 : 0;
  out[totalsOffset + 3] = totals.boundaryCount;
  out[totalsOffset + 4] = totals.maxMean;
  out[totalsOffset + 5] = totals.weightSum;
}

/** Writes the coefficients into the buffers' per-cell and free parts (zeros when null). */
export function setCoefficients(design: DesignMatrix, buffers: PassBuffers, coefficients: ArrayLike<number> | null): void {
  const c = design.cellCount;
  const r = design.freeTerms.length;
  if (coefficients === null) {
    buffers.params.fill(0);
    return;
  }
  cellLinearPredictor(design, coefficients, buffers.params.subarray(0, c));
  freeCoefficients(design, coefficients, buffers.params.subarray(c, c + r));
}

/**
 * Runs a whole pass: blocks on this thread (and, with a runner, on its helpers), then adds
 * the blocks' sums in block order into one accumulator and totals.
 */
export function executePass(
  design: DesignMatrix,
  y: Float64Array,
  priorWeights: Float64Array | null,
  buffers: PassBuffers,
  command: PassCommand,
  runner: ParallelPassRunner | null,
): { accumulator: CrossProductAccumulator; totals: PassTotals } {
  const threads = runner === null ? 1 : runner.threads;
  if (runner !== null) runner.start(command);
  try {
    for (let block = 0; block < buffers.blocks; block += threads) runBlock(design, y, priorWeights, buffers, command, block);
  } finally {
    if (runner !== null) runner.finish();
  }
  const accumulator = createAccumulator(design);
  const totals = newTotals();
  for (let block = 0; block < buffers.blocks; block++) {
    const slot = slotAccumulator(design, buffers, block);
    addAccumulator(accumulator, slot.accumulator);
    const t = slot.totalsOffset;
    totals.deviance += buffers.slots[t];
    totals.logLikelihood += buffers.slots[t + 1];
    totals.invalid = totals.invalid || buffers.slots[t + 2] === 1;
    totals.boundaryCount += buffers.slots[t + 3];
    totals.maxMean = Math.max(totals.maxMean, buffers.slots[t + 4]);
    totals.weightSum += buffers.slots[t + 5];
  }
  return { accumulator, totals };
}
