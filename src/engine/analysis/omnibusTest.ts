import { buildDesignMatrix } from '../design/designMatrix.js';
import { fitModel } from '../fit/fitModel.js';
import { likelihoodRatioTest } from '../measures/likelihoodRatioTest.js';
import { nestedModelFTest } from '../measures/nestedModelFTest.js';
import { robustWaldTest } from '../measures/robustWaldTest.js';
import type { OmnibusTest } from '../types.js';
import type { FittedAnalysis } from './fittedAnalysis.js';

/**
 * The omnibus test of all product terms at once: a robust Wald test for modified Poisson,
 * otherwise a refit without the products and the F test (linear) or the likelihood-ratio
 * test; a log-binomial refit that falls back to Poisson gives a Wald test with a warning.
 */
export function omnibusTest(analysis: FittedAnalysis): OmnibusTest {
  const { frame, design, fit, summary, warnings, pool } = analysis;
  const k = design.productIndices.length;
  if (fit.family === 'modified-poisson') return robustWaldTest(fit.coefficients, fit.covariance, design.productIndices);
  const reducedDesign = buildDesignMatrix(frame, { includeProducts: false, centre: summary.centre });
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
