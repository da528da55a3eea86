import { designWithoutProducts } from '../design/designWithoutProducts.js';
import { fitModel } from '../fit/fitModel.js';
import { restrictedStart } from '../fit/restrictedStart.js';
import { likelihoodRatioTest } from '../measures/likelihoodRatioTest.js';
import { nestedModelFTest } from '../measures/nestedModelFTest.js';
import { robustWaldTest } from '../measures/robustWaldTest.js';
import type { DesignMatrix } from '../design/designMatrix.js';
import { EngineError } from '../errors.js';
import type { ModelFit } from '../fit/fitModel.js';
import type { OmnibusTest } from '../types.js';
import type { FittedAnalysis } from './fittedAnalysis.js';

/**
 * The logistic refit started from the restricted estimate, when the full fit converged
 * with no fitted probability at 0 or 1 (under separation the estimates run off and the
 * default path is kept); null when it does not apply or the refit from there fails or
 * does not converge (the caller then refits from the default start).
 */
function warmRefit(analysis: FittedAnalysis, reducedDesign: DesignMatrix): ModelFit | null {
  const { design, fit, frame, pool } = analysis;
  if (fit.family !== 'logistic' || !fit.converged || fit.boundaryFittedCount > 0) return null;
  const start = restrictedStart(fit.coefficients, fit.covariance, design.columns, design.productIndices);
  if (start === null) return null;
  try {
    const reduced = fitModel(reducedDesign, frame.outcome, 'logistic', { parallel: pool, start });
    return reduced.converged && reduced.boundaryFittedCount === 0 ? reduced : null;
  } catch (error) {
    if (error instanceof EngineError) return null;
    throw error;
  }
}

/**
 * The omnibus test of all product terms at once: a robust Wald test for modified Poisson,
 * otherwise a refit without the products and the F test (linear) or the likelihood-ratio
 * test; a log-binomial refit that falls back to Poisson gives a Wald test with a warning.
 * The refit reuses the full design's rows (designWithoutProducts.ts) and a converged
 * logistic refit starts from the restricted estimate (restrictedStart.ts); both change
 * only the work, not the maximum reached.
 */
export function omnibusTest(analysis: FittedAnalysis): OmnibusTest {
  const { frame, design, fit, warnings, pool } = analysis;
  const k = design.productIndices.length;
  // Robust and cluster-robust variances: the likelihood-ratio and F tests assume the model's
  // own variance, so the products are tested by a Wald test with the variance in use.
  if (fit.standardErrors === 'HC0' || fit.standardErrors === 'CR1') return robustWaldTest(fit.coefficients, fit.covariance, design.productIndices);
  const reducedDesign = designWithoutProducts(frame, design);
  const reduced = warmRefit(analysis, reducedDesign) ?? fitModel(reducedDesign, frame.outcome, fit.family, { parallel: pool });
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
