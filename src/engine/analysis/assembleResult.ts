import type { DesignMatrix } from '../design/designMatrix.js';
import type { ModelFit } from '../fit/fitModel.js';
import { indicatorContrast, linearContrastInterval, type WaldReference } from '../measures/linearContrast.js';
import type { AnalysisResult, Coefficient, DoseBlock, OmnibusTest, PlanningBlock, PredictionsBlock, TrendBlock } from '../types.js';
import { ENGINE_VERSION } from '../version.js';
import type { AdditiveInteraction } from './additiveInteraction.js';
import { DOSE_ADDITIVE_NOTE } from './doseSlopes.js';
import type { ContinuousModifierResults } from './continuousModifier.js';
import type { FittedAnalysis } from './fittedAnalysis.js';
import type { ModifierEffects } from './modifierEffects.js';

function coefficientTable(design: DesignMatrix, fit: ModelFit, reference: WaldReference): Coefficient[] {
  const p = design.columns;
  return design.terms.map((term, j) => {
    const interval = linearContrastInterval(fit.coefficients, fit.covariance, indicatorContrast(p, j), reference, 'difference');
    const entry: Coefficient = {
      term: term.name,
      estimate: interval.estimate,
      se: interval.se,
      statistic: interval.se ? (interval.estimate as number) / interval.se : null,
      p: interval.p,
      lower: interval.lower,
      upper: interval.upper,
    };
    if (fit.covarianceRobust !== null) entry.seRobust = Math.sqrt(fit.covarianceRobust[j * p + j]);
    return entry;
  });
}

/** The other stages' outputs that go into the result. */
export interface StageResults {
  effects: ModifierEffects;
  interaction: AdditiveInteraction;
  omnibus: OmnibusTest;
  continuous: ContinuousModifierResults | null;
  /** Sum of the outcome over the analysed rows (events for a binary outcome). */
  outcomeSum: number;
  tables: AnalysisResult['stratifiedTables'];
  bootstrap: AnalysisResult['bootstrap'];
  planning: PlanningBlock;
  standardized: AnalysisResult['standardized'];
  eValues: AnalysisResult['eValues'];
  /** Clusters, person-time rates and frequency weights (clusterRateWeightStage.ts). */
  extras: Pick<AnalysisResult, 'clustering' | 'rates' | 'weights'>;
  dose: DoseBlock | null;
  trend: TrendBlock | null;
  predictions: PredictionsBlock;
}

/** The plain-JSON result (before non-finite numbers are replaced). */
export function assembleResult(analysis: FittedAnalysis, stages: StageResults): AnalysisResult {
  const { spec, checked, frame, design, fit, summary, reference, p, warnings } = analysis;
  const { effects, interaction, continuous } = stages;
  const covariance = fit.covariance;
  const categorical = frame.modifier.kind === 'categorical';
  return {
    n: frame.n,
    dropped: frame.dropped,
    missingByColumn: frame.missingByColumn,
    engineVersion: ENGINE_VERSION,
    seed: checked.method === 'bootstrap' ? checked.seed : null,
    effectMeasure: checked.effectMeasure,
    ciLevel: checked.level,
    ciMethod: checked.method,
    alpha: checked.alpha,
    multiplicity: checked.multiplicity,
    outcome: {
      column: frame.outcomeColumn,
      type: spec.outcome.type,
      event: frame.eventLevel,
      events: frame.outcomeBinary || spec.outcome.type === 'count' ? stages.outcomeSum : null,
      mean: frame.outcomeBinary ? null : stages.outcomeSum / frame.n,
    },
    exposure: {
      column: frame.exposureColumn,
      reference: frame.exposureLevels[0],
      level: frame.exposureLevels[1],
      type: frame.exposureValues === null ? 'binary' : 'continuous',
      mean: stages.predictions.lines.length === 3 ? stages.predictions.lines[1].exposure : null,
      sd: stages.predictions.lines.length === 3 ? stages.predictions.lines[2].exposure - stages.predictions.lines[1].exposure : null,
    },
    modifier: {
      column: frame.modifier.column,
      type: frame.modifier.kind === 'categorical' ? 'categorical' : 'continuous',
      reference: frame.modifier.kind === 'categorical' ? frame.modifier.levels[0] : null,
      levels: frame.modifier.kind === 'categorical' ? [...frame.modifier.levels] : null,
      centre: categorical ? null : summary.centre,
      mean: summary.mean,
      sd: summary.sd,
      observed: summary.observed,
    },
    covariates: frame.covariates.map((covariate) => ({
      column: covariate.column,
      type: covariate.kind,
      reference: covariate.kind === 'categorical' ? covariate.levels[0] : null,
      terms: design.terms.filter((term) => term.role === 'covariate' && term.column === covariate.column).map((term) => term.name),
    })),
    model: {
      family: fit.family,
      requestedFamily: fit.requestedFamily,
      link: fit.link,
      iterations: fit.iterations,
      converged: fit.converged,
      logLik: fit.logLik,
      deviance: fit.deviance,
      aic: -2 * fit.logLik + 2 * (p + (fit.family === 'linear' ? 1 : 0)),
      residualDf: fit.residualDf,
      dispersion: fit.dispersion,
      standardErrors: fit.standardErrors,
      coefficients: coefficientTable(design, fit, reference),
      covariance: Array.from({ length: p }, (_, row) => Array.from(covariance.subarray(row * p, (row + 1) * p))),
    },
    strata: effects.strata,
    modifierEffects: effects.modifierEffects,
    joint: effects.joint,
    interaction: { multiplicative: effects.multiplicative, additive: interaction.additive, omnibus: stages.omnibus },
    ...(continuous !== null ? { slopes: continuous.slopes, johnsonNeyman: continuous.johnsonNeyman, band: continuous.band, spread: continuous.spread } : {}),
    stratifiedTables: stages.tables,
    bootstrap: stages.bootstrap,
    planning: stages.planning,
    standardized: stages.standardized,
    eValues: stages.eValues,
    ...stages.extras,
    dose: stages.dose,
    additiveNote: frame.exposureValues === null ? null : DOSE_ADDITIVE_NOTE,
    trend: stages.trend,
    predictions: stages.predictions,
    screen: null,
    warnings,
  };
}
