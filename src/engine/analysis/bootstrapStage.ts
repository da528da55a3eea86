import { bootstrapIntervals } from '../bootstrap/bootstrapIntervals.js';
import type { AnalysisResult } from '../types.js';
import type { AdditiveInteraction } from './additiveInteraction.js';
import type { ProgressReporter } from './fitStage.js';
import type { FittedAnalysis } from './fittedAnalysis.js';
import type { ModifierEffects } from './modifierEffects.js';

/**
 * Percentile bootstrap of the additive (and multiplicative) measures: fills the intervals
 * of `interaction.additive` in place and returns the accounting block.
 */
export async function bootstrapStage(
  analysis: FittedAnalysis,
  effects: ModifierEffects,
  interaction: AdditiveInteraction,
  signal: AbortSignal | undefined,
  progress: ProgressReporter,
): Promise<AnalysisResult['bootstrap']> {
  const { frame, design, fit, checked, ratio, warnings, bootstrapThreads } = analysis;
  progress('bootstrap', 0);
  const family = fit.family === 'linear' ? 'linear' : fit.family === 'logistic' ? 'binomial-logit' : fit.family === 'log-binomial' ? 'binomial-log' : 'poisson-log';
  // Joint cells (2 × modifier level + exposure) let a replicate recognise a separated resample.
  let jointCellOfRow: Int32Array | null = null;
  if (frame.outcomeBinary && frame.modifier.kind === 'categorical') {
    jointCellOfRow = new Int32Array(frame.n);
    for (let i = 0; i < frame.n; i++) jointCellOfRow[i] = 2 * frame.modifier.codes[i] + frame.exposure[i];
  }
  return bootstrapIntervals(
    {
      job: { design, y: frame.outcome, family, start: fit.coefficients, jointCellOfRow, jointCells: effects.jointCells },
      design, replicates: checked.replicates, seed: checked.seed, level: checked.level, ratio, contrasts: interaction.recodedContrasts,
    },
    interaction.additive,
    warnings,
    { threads: bootstrapThreads, signal, onProgress: (fraction) => progress('bootstrap', fraction) },
  );
}
