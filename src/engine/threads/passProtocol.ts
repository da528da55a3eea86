import type { PassBuffers } from '../fit/blockedPasses.js';

/** Control words per helper: [generation, command, done generation, error flag]. */
export const COMMAND_ATTACH = 1;
export const COMMAND_PASS = 2;
export const COMMAND_EXIT = 9;

/** What a helper needs to compute blocks of a design's passes (arrays on SharedArrayBuffers). */
export interface PassAttachment {
  readonly design: {
    readonly rows: number;
    readonly columns: number;
    readonly cellCount: number;
    readonly cellOfRow: Int32Array;
    readonly cellTerms: Int32Array;
    readonly cellValues: Float64Array;
    readonly freeTerms: Int32Array;
    readonly free: Float64Array;
    readonly offset: Float64Array | null;
  };
  readonly y: Float64Array;
  readonly priorWeights: Float64Array | null;
  readonly buffers: PassBuffers;
}
