import { normalQuantile } from '../distributions/normal.js';
import { stratifiedTables } from '../strata/stratifiedTables.js';
import type { AnalysisOptions, AnalysisResult, AnalysisSpec, AnySpec, EngineData, ScreenSpec } from '../types.js';
import { additiveInteraction } from './additiveInteraction.js';
import { assembleResult } from './assembleResult.js';
import { bootstrapStage } from './bootstrapStage.js';
import { clusterRateWeightStage } from './clusterRateWeightStage.js';
import { continuousModifierStage } from './continuousModifier.js';
import { eValueStage } from './eValueStage.js';
import { checkCancelled, frameAndFit, type ProgressReporter } from './fitStage.js';
import { modifierEffectsStage } from './modifierEffects.js';
import { omnibusTest } from './omnibusTest.js';
import { planningStage } from './planningStage.js';
import { sanitizeResult } from './sanitizeResult.js';
import { standardizedEffectsStage } from './standardizedEffectsStage.js';
import { subgroupScreen } from './subgroupScreen.js';
import { validateSpec } from './validateSpec.js';
import { doseSlopes } from './doseSlopes.js';
import { profilePredictions } from './profilePredictions.js';
import { trendTest } from './trendTest.js';

/** Above this outcome proportion an odds ratio no longer approximates a risk ratio (methods.md: "say over 10 %"). */
const COMMON_OUTCOME = 0.1;

/**
 * Runs an effect-modification analysis: data in → complete cases and coding → design →
 * fit → measures (strata, joint effects, multiplicative and additive interaction,
 * omnibus test, slopes and Johnson-Neyman for continuous modifiers) → stratified tables →
 * bootstrap (when asked) → planning → a plain-JSON result with warnings. Each stage is a
 * function of its own in this folder; they run in this order, which is also the order of
 * the warnings they add.
 *
 * @throws EngineError subclasses for every user-caused failure (see errors.ts),
 *   AnalysisCancelledError when `options.signal` aborts.
 */
export async function runAnalysis(data: EngineData, spec: AnySpec, options: AnalysisOptions = {}): Promise<AnalysisResult> {
  // A subgroup screen ("modifiers") runs this single-modifier pipeline once per modifier.
  if (spec !== null && typeof spec === 'object' && spec.modifiers !== undefined) return subgroupScreen(data, spec as ScreenSpec, options, runSingle);
  return runSingle(data, spec as AnalysisSpec, options);
}

async function runSingle(data: EngineData, spec: AnalysisSpec, options: AnalysisOptions): Promise<AnalysisResult> {
  const { signal } = options;
  const progress: ProgressReporter = (stage, fraction) => options.onProgress?.({ stage, fraction });
  checkCancelled(signal);
  const checked = validateSpec(spec);
  const analysis = await frameAndFit(data, spec, checked, options, progress);
  const { frame, fit, warnings } = analysis;
  checkCancelled(signal);
  progress('measures', 0);

  const omnibus = omnibusTest(analysis);
  const effects = modifierEffectsStage(analysis);
  const interaction = additiveInteraction(analysis, effects);
  const continuous = frame.modifier.kind === 'continuous' ? continuousModifierStage(analysis) : null;
  const standardized = standardizedEffectsStage(analysis);
  const eValues = eValueStage(analysis, effects.strata);
  const dose = doseSlopes(analysis);
  const trend = trendTest(analysis);
  const predictions = profilePredictions(analysis);

  // Outcome-level warnings.
  let outcomeSum = 0;
  for (let i = 0; i < frame.n; i++) outcomeSum += frame.outcome[i];
  const prevalence = outcomeSum / frame.n;
  if (fit.family === 'logistic' && prevalence > COMMON_OUTCOME) {
    warnings.push({
      code: 'COMMON_OUTCOME_OR_RERI',
      message: `The outcome is common (${(100 * prevalence).toFixed(1)}% of rows), so odds ratios overstate risk ratios and RERI computed from odds ratios only approximates RERI from risk ratios; consider a log-binomial or modified Poisson model.`,
    });
  }

  // Stratified 2 × 2 tables.
  let tables: AnalysisResult['stratifiedTables'] = null;
  if (frame.outcomeBinary && frame.modifier.kind === 'categorical' && frame.exposureValues === null) {
    progress('tables', 0);
    tables = stratifiedTables(frame, normalQuantile(analysis.tail), warnings);
  }

  const bootstrap = checked.method === 'bootstrap' ? await bootstrapStage(analysis, effects, interaction, signal, progress) : null;
  checkCancelled(signal);
  const planning = planningStage(analysis, effects);
  const extras = clusterRateWeightStage(analysis, options.personTimeUnit ?? null);
  const result = assembleResult(analysis, { effects, interaction, omnibus, continuous, outcomeSum, tables, bootstrap, planning, standardized, eValues, extras, dose, trend, predictions });
  progress('done', 1);
  return sanitizeResult(result);
}
