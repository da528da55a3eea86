import { defaultThreadCount } from '../bootstrap/percentileBootstrap.js';
import { buildAnalysisFrame } from '../design/analysisFrame.js';
import { buildDesignMatrix } from '../design/designMatrix.js';
import { expandFrequencyWeights } from '../design/frequencyWeights.js';
import { normalQuantile } from '../distributions/normal.js';
import { studentTQuantile } from '../distributions/studentT.js';
import { AnalysisCancelledError } from '../errors.js';
import { fitDiagnostics, fitModel } from '../fit/fitModel.js';
import { passPool } from '../threads/passPool.js';
import type { AnalysisOptions, AnalysisSpec, EngineData, EngineWarning, ProgressEvent } from '../types.js';
import type { FittedAnalysis } from './fittedAnalysis.js';
import { summariseModifier } from './modifierSummary.js';
import type { CheckedSpec } from './validateSpec.js';

/** From this many rows the fits split their passes across threads (results are identical either way). */
const PARALLEL_FIT_ROWS = 200_000;

export type ProgressReporter = (stage: ProgressEvent['stage'], fraction: number) => void;

export function checkCancelled(signal: AbortSignal | undefined): void {
  if (signal?.aborted) throw new AnalysisCancelledError();
}

/**
 * The first stages of a run: complete cases and coding (the frame), the modifier summary,
 * the design with product terms, and the fit, with the fit's warnings after the frame's.
 */
export async function frameAndFit(
  data: EngineData,
  spec: AnalysisSpec,
  checked: CheckedSpec,
  options: AnalysisOptions,
  progress: ProgressReporter,
): Promise<FittedAnalysis> {
  const { signal } = options;
  progress('prepare', 0);
  // Frequency weights: the rows are expanded into the units they stand for (frequencyWeights.ts).
  const weighted = spec.weights !== undefined ? expandFrequencyWeights(data, spec, spec.weights.column) : null;
  const frame = buildAnalysisFrame(weighted?.data ?? data, spec);
  const warnings: EngineWarning[] = [...(weighted?.warnings ?? []), ...frame.warnings];
  const summary = summariseModifier(frame, spec);
  const threads = options.threads ?? defaultThreadCount();
  const bootstrapThreads = checked.method === 'bootstrap' ? threads : 0;
  // Large fits split their passes across threads; the sums are blocked, so the numbers are
  // the same with or without them.
  const parallelFit = threads > 1 && frame.n >= (options.parallelFitRows ?? PARALLEL_FIT_ROWS);
  const pool = parallelFit ? await passPool(threads - 1) : null;
  const design = buildDesignMatrix(frame, { includeProducts: true, centre: summary.centre, shared: bootstrapThreads > 1 || parallelFit });
  checkCancelled(signal);
  progress('fit', 0);

  const fit = fitModel(design, frame.outcome, spec.model, { standardErrors: checked.standardErrors, parallel: pool, cluster: frame.extras?.cluster ?? null });
  warnings.push(...fit.warnings, ...fitDiagnostics(design, fit));
  const ratio = fit.family !== 'linear';
  const tail = 1 - (1 - checked.level) / 2;
  const critical = ratio ? normalQuantile(tail) : studentTQuantile(tail, fit.residualDf);
  return {
    spec,
    checked,
    frame,
    summary,
    design,
    fit,
    pool,
    bootstrapThreads,
    ratio,
    scale: ratio ? 'ratio' : 'difference',
    tail,
    critical,
    reference: { critical, df: fit.waldDf },
    p: design.columns,
    weights: weighted?.block ?? null,
    warnings,
  };
}
