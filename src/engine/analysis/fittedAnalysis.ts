import type { AnalysisFrame } from '../design/analysisFrame.js';
import type { DesignMatrix } from '../design/designMatrix.js';
import type { ModelFit } from '../fit/fitModel.js';
import type { EffectScale, WaldReference } from '../measures/linearContrast.js';
import type { PassPool } from '../threads/passPool.js';
import type { AnalysisSpec, EngineWarning, WeightsBlock } from '../types.js';
import type { ModifierSummary } from './modifierSummary.js';
import type { CheckedSpec } from './validateSpec.js';

/** What every stage after the fit reads: the frame, the design, the fit and the reference for intervals. */
export interface FittedAnalysis {
  readonly spec: AnalysisSpec;
  readonly checked: CheckedSpec;
  readonly frame: AnalysisFrame;
  readonly summary: ModifierSummary;
  readonly design: DesignMatrix;
  readonly fit: ModelFit;
  /** Helper threads for large fits, or null. */
  readonly pool: PassPool | null;
  /** Threads for the bootstrap (0 when there is none). */
  readonly bootstrapThreads: number;
  /** Ratio measures (every family but the linear model). */
  readonly ratio: boolean;
  readonly scale: EffectScale;
  /** 1 − (1 − level)/2. */
  readonly tail: number;
  readonly critical: number;
  readonly reference: WaldReference;
  /** p, the number of model terms. */
  readonly p: number;
  /** Frequency weights: rows and the units they stand for (the frame holds the units); null without. */
  readonly weights: WeightsBlock | null;
  /** Warnings so far; later stages append in their run order. */
  readonly warnings: EngineWarning[];
}
