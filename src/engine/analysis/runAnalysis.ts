import { bootstrapIntervals } from '../bootstrap/bootstrapIntervals.js';
import { defaultThreadCount } from '../bootstrap/percentileBootstrap.js';
import { normalQuantile } from '../distributions/normal.js';
import { studentTQuantile } from '../distributions/studentT.js';
import { buildAnalysisFrame, type AnalysisFrame } from '../design/analysisFrame.js';
import { buildDesignMatrix, type DesignMatrix } from '../design/designMatrix.js';
import { AnalysisCancelledError } from '../errors.js';
import { fitDiagnostics, fitModel, type ModelFit } from '../fit/fitModel.js';
import { attributableProportion, attributableProportionOfJointEffect } from '../measures/attributableProportion.js';
import { johnsonNeyman } from '../measures/johnsonNeyman.js';
import { jointLogRatios, recodeForPreventive, type JointLogRatios } from '../measures/jointLogRatios.js';
import { likelihoodRatioTest } from '../measures/likelihoodRatioTest.js';
import { indicatorContrast, linearContrastInterval, type EffectScale, type WaldReference } from '../measures/linearContrast.js';
import { nestedModelFTest } from '../measures/nestedModelFTest.js';
import {
  relativeExcessRiskDueToInteraction,
  relativeExcessRiskDueToInteractionMover,
  type AdditiveInterval,
} from '../measures/relativeExcessRiskDueToInteraction.js';
import { robustWaldTest } from '../measures/robustWaldTest.js';
import { significanceBand } from '../measures/significanceBand.js';
import { quantileType7, simpleSlopes, type SlopePoint } from '../measures/simpleSlopes.js';
import { synergyIndex } from '../measures/synergyIndex.js';
import { benjaminiHochbergAdjustment } from '../multiplicity/benjaminiHochbergAdjustment.js';
import { holmAdjustment } from '../multiplicity/holmAdjustment.js';
import { interactionPower, requiredSampleSize, smallestDetectableInteraction } from '../planning/interactionPower.js';
import { stratifiedTables } from '../strata/stratifiedTables.js';
import { passPool, type PassPool } from '../threads/passPool.js';
import type {
  AdditiveEntry,
  AnalysisOptions,
  AnalysisResult,
  AnalysisSpec,
  Coefficient,
  EngineData,
  EngineWarning,
  JointCell,
  MeasureInterval,
  ModifierEffect,
  MultiplicativeEntry,
  OmnibusTest,
  PlanningBlock,
  StratumEffect,
} from '../types.js';
import { ENGINE_VERSION } from '../version.js';
import { sanitizeResult } from './sanitizeResult.js';
import { validateSpec, type CheckedSpec } from './validateSpec.js';

/** From this many rows the fits split their passes across threads (results are identical either way). */
const PARALLEL_FIT_ROWS = 200_000;
/** Fewer events or non-events than this in a cell earns a sparse-data warning (common practice). */
const SPARSE_CELL_COUNT = 5;
/** Above this outcome proportion an odds ratio no longer approximates a risk ratio (methods.md: "say over 10 %"). */
const COMMON_OUTCOME = 0.1;

interface ModifierSummary {
  centre: number;
  mean: number | null;
  sd: number | null;
  observed: [number, number] | null;
  median: number | null;
  sorted: Float64Array | null;
}

function summariseModifier(frame: AnalysisFrame, spec: AnalysisSpec): ModifierSummary {
  if (frame.modifier.kind !== 'continuous') return { centre: 0, mean: null, sd: null, observed: null, median: null, sorted: null };
  const values = frame.modifier.values;
  let sum = 0;
  for (let i = 0; i < values.length; i++) sum += values[i];
  const mean = sum / values.length;
  let squares = 0;
  for (let i = 0; i < values.length; i++) squares += (values[i] - mean) ** 2;
  const sd = Math.sqrt(squares / (values.length - 1));
  const sorted = Float64Array.from(values).sort();
  const median = quantileType7(sorted, 0.5);
  const requested = spec.modifier.centre ?? 'none';
  const centre = requested === 'none' ? 0 : requested === 'mean' ? mean : requested === 'median' ? median : requested;
  return { centre, mean, sd, observed: [sorted[0], sorted[sorted.length - 1]], median, sorted };
}

function checkCancelled(signal: AbortSignal | undefined): void {
  if (signal?.aborted) throw new AnalysisCancelledError();
}

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

function measureInterval(interval: AdditiveInterval | null, method: MeasureInterval['method']): MeasureInterval | null {
  if (interval === null) return null;
  return { estimate: interval.estimate, lower: interval.lower, upper: interval.upper, se: interval.se, method };
}

/** Contrast rows (c10, c01, c11) of one modifier level's joint effects. */
function jointContrasts(design: DesignMatrix, level: number, summary: ModifierSummary, continuous: boolean): Float64Array {
  const p = design.columns;
  const rows = new Float64Array(3 * p);
  const a = design.exposureIndex;
  const m = design.modifierIndices[level];
  const product = design.productIndices[level];
  if (!continuous) {
    rows[a] = 1;
    rows[p + m] = 1;
    rows[2 * p + a] = 1;
    rows[2 * p + m] = 1;
    rows[2 * p + product] = 1;
    return rows;
  }
  // Continuous modifier: reference value x0 = mean, contrast +1 SD.
  const x0 = (summary.mean as number) - summary.centre;
  const delta = summary.sd as number;
  rows[a] = 1;
  rows[product] = x0;
  rows[p + m] = delta;
  rows[2 * p + a] = 1;
  rows[2 * p + m] = delta;
  rows[2 * p + product] = x0 + delta;
  return rows;
}

function additiveFromJoint(joint: JointLogRatios, critical: number, method: CheckedSpec['method']) {
  const reri = relativeExcessRiskDueToInteraction(joint, critical);
  if (method === 'mover') {
    const mover = relativeExcessRiskDueToInteractionMover(joint, critical);
    return {
      reri: { estimate: reri.estimate, lower: mover.lower, upper: mover.upper, se: reri.se, method: 'mover' as const },
      ap: measureInterval(attributableProportion(joint, critical), 'delta'),
      apStar: measureInterval(attributableProportionOfJointEffect(joint, critical), 'delta'),
      s: measureInterval(synergyIndex(joint, critical), 'delta'),
    };
  }
  return {
    reri: measureInterval(reri, 'delta'),
    ap: measureInterval(attributableProportion(joint, critical), 'delta'),
    apStar: measureInterval(attributableProportionOfJointEffect(joint, critical), 'delta'),
    s: measureInterval(synergyIndex(joint, critical), 'delta'),
  };
}

function omnibusTest(
  frame: AnalysisFrame,
  design: DesignMatrix,
  fit: ModelFit,
  centre: number,
  warnings: EngineWarning[],
  pool: PassPool | null,
): OmnibusTest {
  const k = design.productIndices.length;
  if (fit.family === 'modified-poisson') return robustWaldTest(fit.coefficients, fit.covariance, design.productIndices);
  const reducedDesign = buildDesignMatrix(frame, { includeProducts: false, centre });
  const reduced = fitModel(reducedDesign, frame.outcome, fit.family, { parallel: pool });
  if (fit.family === 'linear') {
    return nestedModelFTest(fit.residualSumOfSquares as number, reduced.residualSumOfSquares as number, k, fit.residualDf);
  }
  if (fit.family === 'log-binomial' && reduced.family !== 'log-binomial') {
    warnings.push({
      code: 'OMNIBUS_WALD',
      message: 'The log-binomial model without product terms could not be fitted, so the omnibus test is a Wald test.',
    });
    const wald = robustWaldTest(fit.coefficients, fit.covariance, design.productIndices);
    return { ...wald, test: 'wald' };
  }
  return likelihoodRatioTest(fit.logLik, reduced.logLik, k);
}

/**
 * Runs an effect-modification analysis: data in → complete cases and coding → design →
 * fit → measures (strata, joint effects, multiplicative and additive interaction,
 * omnibus test, slopes and Johnson-Neyman for continuous modifiers) → stratified tables →
 * bootstrap (when asked) → planning → a plain-JSON result with warnings.
 *
 * @throws EngineError subclasses for every user-caused failure (see errors.ts),
 *   AnalysisCancelledError when `options.signal` aborts.
 */
export async function runAnalysis(data: EngineData, spec: AnalysisSpec, options: AnalysisOptions = {}): Promise<AnalysisResult> {
  const { signal } = options;
  const progress = (stage: Parameters<NonNullable<AnalysisOptions['onProgress']>>[0]['stage'], fraction: number) =>
    options.onProgress?.({ stage, fraction });
  checkCancelled(signal);
  const checked = validateSpec(spec);
  progress('prepare', 0);
  const frame = buildAnalysisFrame(data, spec);
  const warnings: EngineWarning[] = [...frame.warnings];
  const continuous = frame.modifier.kind === 'continuous';
  const summary = summariseModifier(frame, spec);
  const threads = options.threads ?? defaultThreadCount();
  const useThreads = checked.method === 'bootstrap' ? threads : 0;
  // Large fits split their passes across threads; the sums are blocked, so the numbers are
  // the same with or without them.
  const parallelFit = threads > 1 && frame.n >= (options.parallelFitRows ?? PARALLEL_FIT_ROWS);
  const pool = parallelFit ? await passPool(threads - 1) : null;
  const design = buildDesignMatrix(frame, { includeProducts: true, centre: summary.centre, shared: useThreads > 1 || parallelFit });
  checkCancelled(signal);
  progress('fit', 0);

  const fit = fitModel(design, frame.outcome, spec.model, { standardErrors: checked.standardErrors, parallel: pool });
  warnings.push(...fit.warnings, ...fitDiagnostics(design, fit));
  const ratio = fit.family !== 'linear';
  const scale: EffectScale = ratio ? 'ratio' : 'difference';
  const tail = 1 - (1 - checked.level) / 2;
  const critical = ratio ? normalQuantile(tail) : studentTQuantile(tail, fit.residualDf);
  const reference: WaldReference = { critical, df: fit.waldDf };
  const p = design.columns;
  checkCancelled(signal);
  progress('measures', 0);

  const omnibus = omnibusTest(frame, design, fit, summary.centre, warnings, pool);
  const { coefficients, covariance } = fit;
  const exposureLabel = frame.exposureLevels[1];
  const exposureReference = frame.exposureLevels[0];

  // Counts by cell (exposure × modifier level) for strata, joint cells and warnings.
  const levelCount = frame.modifier.kind === 'categorical' ? frame.modifier.levels.length : 0;
  const cellN = new Float64Array(2 * Math.max(levelCount, 1));
  const cellSum = new Float64Array(2 * Math.max(levelCount, 1));
  for (let i = 0; i < frame.n; i++) {
    const level = frame.modifier.kind === 'categorical' ? frame.modifier.codes[i] : 0;
    const cell = level * 2 + frame.exposure[i];
    cellN[cell]++;
    cellSum[cell] += frame.outcome[i];
  }

  let strata: StratumEffect[] = [];
  const modifierEffects: ModifierEffect[] = [];
  let joint: AnalysisResult['joint'] = null;
  const multiplicative: MultiplicativeEntry[] = [];
  const additive: AdditiveEntry[] = [];
  const jointByLevel: { level: string; contrasts: Float64Array }[] = [];

  if (frame.modifier.kind === 'categorical') {
    const { levels, column } = frame.modifier;
    const raw = levels.map((level, k) => {
      const contrast = indicatorContrast(p, design.exposureIndex, ...(k > 0 ? [design.productIndices[k - 1]] : []));
      const effect = linearContrastInterval(coefficients, covariance, contrast, reference, scale);
      const n = cellN[2 * k] + cellN[2 * k + 1];
      const events = frame.outcomeBinary ? cellSum[2 * k] + cellSum[2 * k + 1] : null;
      return { level, n, events, effect };
    });
    const holm = holmAdjustment(raw.map((entry) => entry.effect.p));
    const bh = benjaminiHochbergAdjustment(raw.map((entry) => entry.effect.p));
    strata = raw.map((entry, k) => ({ ...entry, pAdjusted: { holm: holm[k], bh: bh[k] } }));

    for (let arm = 0; arm < 2; arm++) {
      for (let k = 1; k < levels.length; k++) {
        const indices = [design.modifierIndices[k - 1], ...(arm === 1 ? [design.productIndices[k - 1]] : [])];
        modifierEffects.push({
          exposure: frame.exposureLevels[arm],
          level: levels[k],
          effect: linearContrastInterval(coefficients, covariance, indicatorContrast(p, ...indices), reference, scale),
        });
      }
    }

    const cells: JointCell[] = [];
    for (let k = 0; k < levels.length; k++) {
      for (let arm = 0; arm < 2; arm++) {
        const n = cellN[2 * k + arm];
        const sum = cellSum[2 * k + arm];
        const indices = [
          ...(arm === 1 ? [design.exposureIndex] : []),
          ...(k > 0 ? [design.modifierIndices[k - 1]] : []),
          ...(arm === 1 && k > 0 ? [design.productIndices[k - 1]] : []),
        ];
        cells.push({
          exposure: frame.exposureLevels[arm],
          modifier: levels[k],
          n,
          events: frame.outcomeBinary ? sum : null,
          risk: frame.outcomeBinary ? sum / n : null,
          mean: frame.outcomeBinary ? null : sum / n,
          effect: indices.length === 0 ? null : linearContrastInterval(coefficients, covariance, indicatorContrast(p, ...indices), reference, scale),
        });
        if (frame.outcomeBinary) {
          const stratumName = `${column}=${levels[k]}, ${frame.exposureColumn}=${frame.exposureLevels[arm]}`;
          if (sum === 0 || sum === n) {
            warnings.push({
              code: 'SEPARATION',
              message: `The stratum ${stratumName} has ${sum === 0 ? 'no events' : 'only events'} (${n} rows), so its effect is not estimable: the estimate runs off to ${sum === 0 ? 'zero' : 'infinity'} (quasi-complete separation).`,
              column,
              level: levels[k],
            });
          } else if (sum < SPARSE_CELL_COUNT || n - sum < SPARSE_CELL_COUNT) {
            const few = sum < SPARSE_CELL_COUNT ? `${sum} events` : `${n - sum} non-events`;
            warnings.push({
              code: 'SPARSE_STRATUM',
              message: `The stratum ${stratumName} has only ${few} (fewer than ${SPARSE_CELL_COUNT}); its estimates are imprecise and may be biased.`,
              column,
              level: levels[k],
            });
          }
        }
      }
    }
    joint = { reference: { exposure: exposureReference, modifier: levels[0] }, cells };

    for (let k = 1; k < levels.length; k++) {
      const product = design.productIndices[k - 1];
      if (ratio) {
        const interaction = linearContrastInterval(coefficients, covariance, indicatorContrast(p, product), reference, 'ratio');
        multiplicative.push({ level: levels[k], estimate: interaction.estimate, lower: interaction.lower, upper: interaction.upper, p: interaction.p, se: interaction.se });
      }
      jointByLevel.push({ level: levels[k], contrasts: jointContrasts(design, k - 1, summary, false) });
    }
  } else {
    const product = design.productIndices[0];
    if (ratio) {
      const interaction = linearContrastInterval(coefficients, covariance, indicatorContrast(p, product), reference, 'ratio');
      multiplicative.push({
        level: `per 1 unit of ${frame.modifier.column}`,
        estimate: interaction.estimate, lower: interaction.lower, upper: interaction.upper, p: interaction.p, se: interaction.se,
      });
    }
    jointByLevel.push({ level: `+1 SD of ${frame.modifier.column}`, contrasts: jointContrasts(design, 0, summary, true) });
  }

  // Additive interaction per level (ratio models), or the difference of differences (linear).
  const recodedContrasts: Float64Array[] = [];
  for (const { level, contrasts } of jointByLevel) {
    const modifierReference = frame.modifier.kind === 'categorical' ? frame.modifier.levels[0] : `mean of ${frame.modifier.column}`;
    if (!ratio) {
      const productRow = contrasts.subarray(2 * p, 3 * p).map((value, j) => value - contrasts[j] - contrasts[p + j]);
      const difference = linearContrastInterval(coefficients, covariance, productRow, reference, 'difference');
      additive.push({ level, reference: { exposure: exposureReference, modifier: modifierReference }, reri: null, ap: null, apStar: null, s: null, differenceInDifferences: difference });
      recodedContrasts.push(productRow);
      continue;
    }
    let jointEffects = jointLogRatios(coefficients, covariance, contrasts);
    if (checked.preventive) {
      jointEffects = recodeForPreventive(coefficients, covariance, jointEffects);
    } else if (jointEffects.estimates.some((value) => value < 0)) {
      warnings.push({
        code: 'PREVENTIVE_EXPOSURE',
        message: `For ${level}, a joint stratum has a lower risk than the reference; RERI, AP and S are easier to read after recoding so that the lowest-risk stratum is the reference (set "preventive").`,
        level,
      });
    }
    recodedContrasts.push(jointEffects.contrasts);
    const [refExposure, refModifier] = jointEffects.referenceCell;
    const measures = additiveFromJoint(jointEffects, critical, checked.method);
    if (measures.s === null) {
      warnings.push({
        code: 'S_UNDEFINED',
        message: `The synergy index S is undefined for ${level} (a joint effect is not above the reference; see "preventive").`,
        level,
      });
    }
    additive.push({
      level,
      reference: { exposure: frame.exposureLevels[refExposure], modifier: refModifier === 0 ? modifierReference : level },
      ...measures,
      differenceInDifferences: null,
    });
  }
  if (ratio && checked.method === 'mover') {
    warnings.push({
      code: 'MOVER_RERI_ONLY',
      message: 'MOVER intervals are computed for RERI; AP, AP* and S use delta-method intervals.',
    });
  }

  // Continuous modifiers: simple slopes, Johnson-Neyman boundaries and band data.
  let slopes: AnalysisResult['slopes'];
  let johnsonNeymanResult: AnalysisResult['johnsonNeyman'];
  let band: AnalysisResult['band'];
  if (continuous) {
    const product = design.productIndices[0];
    const mean = summary.mean as number;
    const sd = summary.sd as number;
    const requested = spec.modifier.slopesAt ?? { kind: 'sd' };
    const points: SlopePoint[] =
      requested.kind === 'sd'
        ? [
            { label: 'mean − 1 SD', at: mean - sd },
            { label: 'mean', at: mean },
            { label: 'mean + 1 SD', at: mean + sd },
          ]
        : requested.kind === 'percentiles'
          ? requested.percentiles.map((percentile) => ({ label: `${percentile}th percentile`, at: quantileType7(summary.sorted as Float64Array, percentile / 100) }))
          : requested.values.map((value) => ({ label: `at ${value}`, at: value }));
    slopes = simpleSlopes(coefficients, covariance, design.exposureIndex, product, summary.centre, points, reference, scale);
    const jnCritical = ratio ? normalQuantile(1 - checked.alpha / 2) : studentTQuantile(1 - checked.alpha / 2, fit.residualDf);
    const a = design.exposureIndex;
    johnsonNeymanResult = johnsonNeyman(
      { b1: coefficients[a], b3: coefficients[product], v11: covariance[a * p + a], v13: covariance[a * p + product], v33: covariance[product * p + product] },
      jnCritical,
      summary.observed as [number, number],
      summary.centre,
    );
    band = significanceBand(coefficients, covariance, a, product, summary.centre, summary.observed as [number, number], reference, scale);
  }

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
  if (frame.outcomeBinary && frame.modifier.kind === 'categorical') {
    progress('tables', 0);
    tables = stratifiedTables(frame, normalQuantile(tail), warnings);
  }

  // Percentile bootstrap of the additive (and multiplicative) measures.
  let bootstrap: AnalysisResult['bootstrap'] = null;
  if (checked.method === 'bootstrap') {
    progress('bootstrap', 0);
    const family = fit.family === 'linear' ? 'linear' : fit.family === 'logistic' ? 'binomial-logit' : fit.family === 'log-binomial' ? 'binomial-log' : 'poisson-log';
    // Joint cells (2 × modifier level + exposure) let a replicate recognise a separated resample.
    let jointCellOfRow: Int32Array | null = null;
    if (frame.outcomeBinary && frame.modifier.kind === 'categorical') {
      jointCellOfRow = new Int32Array(frame.n);
      for (let i = 0; i < frame.n; i++) jointCellOfRow[i] = 2 * frame.modifier.codes[i] + frame.exposure[i];
    }
    bootstrap = await bootstrapIntervals(
      {
        job: { design, y: frame.outcome, family, start: fit.coefficients, jointCellOfRow, jointCells: 2 * Math.max(levelCount, 1) },
        design, replicates: checked.replicates, seed: checked.seed, level: checked.level, ratio, contrasts: recodedContrasts,
      },
      additive,
      warnings,
      { threads: useThreads, signal, onProgress: (fraction) => progress('bootstrap', fraction) },
    );
  }
  checkCancelled(signal);

  // Planning: power for the observed n, detectable interaction at the target power.
  const specifiedInteraction = spec.planning?.interaction;
  const interactionSource: PlanningBlock['interactionSource'] = specifiedInteraction === undefined ? 'main-effect' : 'spec';
  const delta = specifiedInteraction === undefined ? Math.abs(coefficients[design.exposureIndex]) : ratio ? Math.log(specifiedInteraction) : specifiedInteraction;
  const planning: PlanningBlock = {
    method: 'normal-approximation',
    alpha: checked.alpha,
    targetPower: checked.targetPower,
    n: frame.n,
    interactionSource,
    levels: design.productIndices.map((product, k) => {
      const se = Math.sqrt(covariance[product * p + product]);
      const detectable = smallestDetectableInteraction(se, checked.alpha, checked.targetPower);
      return {
        level: jointByLevel[k]?.level ?? design.terms[product].name,
        se,
        interaction: ratio ? Math.exp(delta) : delta,
        power: delta === 0 ? null : interactionPower(delta, se, checked.alpha),
        detectable: ratio ? { lower: Math.exp(-detectable), upper: Math.exp(detectable) } : { lower: -detectable, upper: detectable },
        requiredN: delta === 0 ? null : requiredSampleSize(delta, se, frame.n, checked.alpha, checked.targetPower),
      };
    }),
  };

  const result: AnalysisResult = {
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
      events: frame.outcomeBinary ? outcomeSum : null,
      mean: frame.outcomeBinary ? null : prevalence,
    },
    exposure: { column: frame.exposureColumn, reference: exposureReference, level: exposureLabel },
    modifier: {
      column: frame.modifier.column,
      type: frame.modifier.kind === 'categorical' ? 'categorical' : 'continuous',
      reference: frame.modifier.kind === 'categorical' ? frame.modifier.levels[0] : null,
      levels: frame.modifier.kind === 'categorical' ? [...frame.modifier.levels] : null,
      centre: continuous ? summary.centre : null,
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
    strata,
    modifierEffects,
    joint,
    interaction: { multiplicative, additive, omnibus },
    ...(slopes !== undefined ? { slopes } : {}),
    ...(johnsonNeymanResult !== undefined ? { johnsonNeyman: johnsonNeymanResult } : {}),
    ...(band !== undefined ? { band } : {}),
    stratifiedTables: tables,
    bootstrap,
    planning,
    warnings,
  };
  progress('done', 1);
  return sanitizeResult(result);
}

