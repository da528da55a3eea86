import { NotPositiveDefiniteError } from '../core/symmetricPositiveDefinite.js';
import type { DesignMatrix } from '../design/designMatrix.js';
import { FitFailedError, SingularDesignError } from '../errors.js';
import type { EngineWarning, ModelFamily } from '../types.js';
import { fitGeneralizedLinearModel, InvalidStepError, type GlmFamily, type GlmFit } from './iterativelyReweightedLeastSquares.js';
import { fitOrdinaryLeastSquares } from './ordinaryLeastSquares.js';
import { poissonSandwichVariance } from './poissonSandwichVariance.js';
import { clusterRobustVariance, type ScoreFamily } from './clusterRobustVariance.js';
import type { PassPool } from '../threads/passPool.js';

/** A fitted model as the measures need it. */
export interface ModelFit {
  readonly family: ModelFamily;
  readonly requestedFamily: ModelFamily;
  readonly link: 'logit' | 'log' | 'identity';
  readonly coefficients: Float64Array;
  /** Covariance used for every measure (model-based, HC0 sandwich, or HC3). */
  readonly covariance: Float64Array;
  readonly standardErrors: 'model' | 'HC0' | 'HC3' | 'CR1';
  /** Linear models: the HC3 covariance beside the classical one. */
  readonly covarianceRobust: Float64Array | null;
  readonly iterations: number;
  readonly converged: boolean;
  readonly logLik: number;
  readonly deviance: number;
  readonly residualDf: number;
  readonly dispersion: number;
  /** Linear models: the residual sum of squares (for F tests). */
  readonly residualSumOfSquares: number | null;
  readonly boundaryFittedCount: number;
  readonly maxFittedMean: number;
  readonly smallestPivotRatio: number;
  readonly smallestPivotIndex: number;
  /** Normal (GLM) or t (linear) reference distribution for Wald intervals. */
  readonly waldDf: number;
  readonly warnings: EngineWarning[];
}

export interface FitOptions {
  /** 'robust' (poisson): the HC0 sandwich, as for modified Poisson. */
  readonly standardErrors?: 'model' | 'hc3' | 'robust';
  /** Clusters of the rows: every covariance becomes the cluster-robust CR1 (clusterRobustVariance.ts). */
  readonly cluster?: { readonly codes: Int32Array; readonly count: number } | null;
  /** Helper threads for the passes over the rows (results are identical without them). */
  readonly parallel?: PassPool | null;
  /**
   * Starting coefficients for a logistic or Poisson fit (others ignore them); the fit
   * still runs to the maximum under the usual rule, so only the number of steps changes.
   */
  readonly start?: ArrayLike<number> | null;
}

/** Pivot ratios below this (VIF above 1e8) earn a near-collinearity warning. */
const NEAR_SINGULAR_RATIO = 1e-8;

function singular(design: DesignMatrix, error: NotPositiveDefiniteError): SingularDesignError {
  const term = design.terms[error.index];
  return new SingularDesignError(term?.name ?? `term ${error.index + 1}`, term?.column ?? undefined);
}

function glmFamilyOf(model: ModelFamily): GlmFamily {
  if (model === 'logistic') return 'binomial-logit';
  if (model === 'log-binomial') return 'binomial-log';
  return 'poisson-log';
}

function fromGlm(model: ModelFamily, requested: ModelFamily, design: DesignMatrix, y: Float64Array, fit: GlmFit, warnings: EngineWarning[], options: FitOptions): ModelFit {
  const bread = fit.covarianceUnscaled as Float64Array;
  const robust = model === 'modified-poisson' || (model === 'poisson' && options.standardErrors === 'robust');
  const cluster = options.cluster ?? null;
  const covariance =
    cluster !== null
      ? clusterRobustVariance(design, y, fit.coefficients, bread, fit.family, cluster.codes, cluster.count)
      : robust
        ? poissonSandwichVariance(design, y, fit.coefficients, bread)
        : bread;
  const p = design.columns;
  return {
    family: model,
    requestedFamily: requested,
    link: model === 'logistic' ? 'logit' : 'log',
    coefficients: fit.coefficients,
    covariance,
    standardErrors: cluster !== null ? 'CR1' : robust ? 'HC0' : 'model',
    covarianceRobust: null,
    iterations: fit.iterations,
    converged: fit.converged,
    logLik: fit.logLik,
    deviance: fit.deviance,
    residualDf: fit.weightSum - p,
    dispersion: 1,
    residualSumOfSquares: null,
    boundaryFittedCount: fit.boundaryFittedCount,
    maxFittedMean: fit.maxFittedMean,
    smallestPivotRatio: fit.smallestPivotRatio,
    smallestPivotIndex: fit.smallestPivotIndex,
    waldDf: Infinity,
    warnings,
  };
}

function meanOf(values: Float64Array): number {
  let sum = 0;
  for (let i = 0; i < values.length; i++) sum += values[i];
  return sum / values.length;
}

/**
 * Fits the specification's model to a design: linear (OLS with classical or HC3 errors),
 * logistic (IRLS), modified Poisson (IRLS with the HC0 sandwich), or log-binomial (IRLS
 * from the start b0 = log ȳ, other coefficients 0); every IRLS fit is run to the maximum
 * and its variances use the weights at the final coefficients (see
 * iterativelyReweightedLeastSquares.ts), with the documented fallback: when the
 * log-binomial fit cannot find valid fitted risks, does not converge in 25 iterations, or
 * ends on the boundary (a fitted risk above 1 − 1e-6), the model is refitted as modified
 * Poisson and a LOG_BINOMIAL_FALLBACK warning says so (also when its working weights become
 * numerically singular part-way, as risks approach 1).
 *
 * @throws SingularDesignError naming the aliased term; FitFailedError when no fit is possible.
 */
export function fitModel(inputDesign: DesignMatrix, inputY: Float64Array, model: ModelFamily, options: FitOptions = {}): ModelFit {
  const warnings: EngineWarning[] = [];
  const attached = options.parallel ? options.parallel.attach(inputDesign, inputY) : null;
  const design = attached?.design ?? inputDesign;
  const y = attached?.y ?? inputY;
  const parallel = attached === null ? null : { runner: attached.runner, buffers: attached.buffers };
  try {
    if (model === 'linear') {
      const useHC3 = options.standardErrors === 'hc3';
      const fit = fitOrdinaryLeastSquares({ design, y, computeHC3: true, parallel });
      const cluster = options.cluster ?? null;
      const scores: ScoreFamily = 'linear';
      return {
        family: 'linear',
        requestedFamily: 'linear',
        link: 'identity',
        coefficients: fit.coefficients,
        covariance:
          cluster !== null
            ? clusterRobustVariance(design, y, fit.coefficients, fit.crossProductInverse, scores, cluster.codes, cluster.count)
            : useHC3
              ? (fit.covarianceHC3 as Float64Array)
              : fit.covarianceClassical,
        standardErrors: cluster !== null ? 'CR1' : useHC3 ? 'HC3' : 'model',
        covarianceRobust: fit.covarianceHC3,
        iterations: 0,
        converged: true,
        logLik: fit.logLik,
        deviance: fit.residualSumOfSquares,
        residualDf: fit.residualDf,
        dispersion: fit.sigmaSquared,
        residualSumOfSquares: fit.residualSumOfSquares,
        boundaryFittedCount: 0,
        maxFittedMean: Number.NaN,
        smallestPivotRatio: fit.smallestPivotRatio,
        smallestPivotIndex: fit.smallestPivotIndex,
        waldDf: fit.residualDf,
        warnings,
      };
    }
    if (model === 'log-binomial') {
      const start = new Float64Array(design.columns);
      start[0] = Math.log(meanOf(y));
      let reason: string | null = null;
      try {
        const fit = fitGeneralizedLinearModel({ design, y, family: 'binomial-log', start, parallel });
        if (!fit.converged) reason = 'it did not converge in 25 iterations';
        else if (fit.maxFittedMean > 1 - 1e-6) reason = 'its estimate lies on the boundary (a fitted risk of 1)';
        else return fromGlm('log-binomial', 'log-binomial', design, y, fit, warnings, options);
      } catch (error) {
        if (error instanceof InvalidStepError) reason = 'no valid fitted risks could be found';
        // Singular weights part-way (risks running to 1) are a failure of the fit, not of the
        // design: a truly singular design fails again, and is reported, in the fallback fit.
        else if (error instanceof NotPositiveDefiniteError) reason = 'its iterations became numerically singular';
        else throw error;
      }
      warnings.push({
        code: 'LOG_BINOMIAL_FALLBACK',
        message: `The log-binomial model failed (${reason}), so risk ratios come from a modified Poisson model (Poisson regression with robust standard errors) instead.`,
      });
      const fallback = fitGeneralizedLinearModel({ design, y, family: 'poisson-log', parallel });
      return fromGlm('modified-poisson', 'log-binomial', design, y, fallback, warnings, options);
    }
    const fit = fitGeneralizedLinearModel({ design, y, family: glmFamilyOf(model), parallel, start: options.start ?? null });
    return fromGlm(model, model, design, y, fit, warnings, options);
  } catch (error) {
    if (error instanceof NotPositiveDefiniteError) throw singular(design, error);
    if (error instanceof InvalidStepError) throw new FitFailedError(`The ${model} model could not be fitted: ${error.message}.`);
    throw error;
  }
}

/** Warnings about the quality of a fit: non-convergence, separation, near-collinearity, risks above 1. */
export function fitDiagnostics(design: DesignMatrix, fit: ModelFit): EngineWarning[] {
  const warnings: EngineWarning[] = [];
  if (!fit.converged) {
    warnings.push({
      code: 'NOT_CONVERGED',
      message: `The ${fit.family} model did not converge within 25 iterations; its estimates may be unreliable.`,
    });
  }
  if ((fit.family === 'logistic' || fit.family === 'log-binomial') && fit.boundaryFittedCount > 0) {
    warnings.push({
      code: 'SEPARATION',
      message: `Fitted probabilities of 0 or 1 occurred in ${fit.boundaryFittedCount} row(s): the outcome is (quasi-)completely separated by some terms, so their estimates and intervals are not reliable.`,
    });
  }
  if (fit.smallestPivotRatio < NEAR_SINGULAR_RATIO) {
    const term = design.terms[fit.smallestPivotIndex];
    warnings.push({
      code: 'NEAR_SINGULAR_DESIGN',
      message: `The term "${term?.name}" is almost a linear combination of the other terms (near rank deficiency); its estimate is unstable.`,
      ...(term?.name ? { term: term.name } : {}),
    });
  }
  if (fit.family === 'modified-poisson' && fit.maxFittedMean > 1) {
    warnings.push({
      code: 'FITTED_RISK_ABOVE_ONE',
      message: `The Poisson model predicts a risk above 1 for some rows (largest ${fit.maxFittedMean.toFixed(3)}); risk ratios remain usable but predicted risks are not.`,
    });
  }
  return warnings;
}
