import type { DesignMatrix } from '../design/designMatrix.js';
import type { GlmFamily } from '../fit/iterativelyReweightedLeastSquares.js';

/**
 * What the main thread sends a bootstrap worker. The row arrays and the result matrix
 * live on SharedArrayBuffers, so nothing large is copied; `control` holds
 * [next replicate to take, replicates finished, cancel flag].
 */
export interface BootstrapWorkerData {
  readonly design: Omit<DesignMatrix, 'terms'> & { readonly terms: readonly [] };
  readonly y: Float64Array;
  readonly family: GlmFamily | 'linear';
  readonly start: Float64Array;
  readonly replicates: number;
  readonly seed: number;
  readonly results: Float64Array;
  /** One status per replicate (REPLICATE_OK, ... in bootstrapReplicate.ts). */
  readonly status: Int32Array;
  readonly jointCellOfRow: Int32Array | null;
  readonly jointCells: number;
  readonly control: Int32Array;
  /** Post a progress message every this many replicates. */
  readonly progressEvery: number;
}

export const CONTROL_NEXT = 0;
export const CONTROL_DONE = 1;
export const CONTROL_CANCEL = 2;
