import { benjaminiHochbergAdjustment } from '../multiplicity/benjaminiHochbergAdjustment.js';
import { holmAdjustment } from '../multiplicity/holmAdjustment.js';
import type { AnalysisOptions, AnalysisResult, AnalysisSpec, EngineData, ScreenEntry, ScreenSpec } from '../types.js';
import { validateScreenSpec } from './validateSpec.js';

/** Runs one single-modifier analysis (runAnalysis). */
export type SingleAnalysis = (data: EngineData, spec: AnalysisSpec, options: AnalysisOptions) => Promise<AnalysisResult>;

/** The single-modifier specification of one of the screen's modifiers: everything else as in the screen. */
export function modifierSpec(spec: ScreenSpec, index: number): AnalysisSpec {
  const { modifiers, modifier: _none, ...rest } = spec;
  const { column, type, reference } = modifiers[index];
  return { ...rest, modifier: reference === undefined ? { column, type } : { column, type, reference } };
}

function screenEntry(result: AnalysisResult, holm: number | null, bh: number | null): ScreenEntry {
  return {
    column: result.modifier.column,
    type: result.modifier.type,
    reference: result.modifier.reference,
    n: result.n,
    dropped: result.dropped,
    strata: result.modifier.type === 'categorical' ? result.strata : [],
    slopes: result.modifier.type === 'continuous' ? (result.slopes ?? []) : [],
    interaction: result.interaction.omnibus,
    pAdjusted: { holm, bh },
  };
}

/**
 * A subgroup screen: each candidate modifier is analysed in a model of its own (the
 * intervention, that modifier, their product and the listed covariates) by the
 * single-modifier pipeline, and the interaction tests (likelihood ratio, F, or robust Wald
 * for modified Poisson) are adjusted across the modifiers by Holm and by
 * Benjamini-Hochberg. The result is the first modifier's full analysis with the `screen`
 * block holding every modifier's effects and tests; each modifier's warnings are kept,
 * named by its column.
 *
 * @throws InvalidSpecError for a malformed list, or any error of a modifier's own analysis.
 */
export async function subgroupScreen(data: EngineData, spec: ScreenSpec, options: AnalysisOptions, single: SingleAnalysis): Promise<AnalysisResult> {
  validateScreenSpec(spec);
  const count = spec.modifiers.length;
  const results: AnalysisResult[] = [];
  for (let index = 0; index < count; index++) {
    const onProgress = options.onProgress;
    const scaled: AnalysisOptions = {
      ...options,
      onProgress: onProgress && ((event) => onProgress({ stage: event.stage === 'done' && index < count - 1 ? 'measures' : event.stage, fraction: (index + event.fraction) / count })),
    };
    results.push(await single(data, modifierSpec(spec, index), scaled));
  }
  const raw = results.map((result) => result.interaction.omnibus.p);
  const holm = holmAdjustment(raw);
  const bh = benjaminiHochbergAdjustment(raw);
  const warnings = results.flatMap((result, index) =>
    index === 0 ? result.warnings : result.warnings.map((warning) => ({ ...warning, message: `${result.modifier.column}: ${warning.message}` })),
  );
  return {
    ...results[0],
    warnings,
    screen: { examined: count, modifiers: results.map((result, index) => screenEntry(result, holm[index], bh[index])) },
  };
}
