/**
 * The omnibus test's refit without the product terms: its design taken from the full
 * design equals the one built from the frame, array for array, and a logistic refit
 * started from the restricted estimate reaches the same maximum as one started from R's
 * default start (seeded simulations; the expected values are the engine's own default
 * path, so any difference is a defect of the shortcut).
 */
import { describe, expect, it } from 'vitest';
import { buildAnalysisFrame } from '@/engine/design/analysisFrame.js';
import { buildDesignMatrix, type DesignMatrix } from '@/engine/design/designMatrix.js';
import { designWithoutProducts } from '@/engine/design/designWithoutProducts.js';
import { fitModel } from '@/engine/fit/fitModel.js';
import { restrictedStart } from '@/engine/fit/restrictedStart.js';
import type { AnalysisSpec } from '@/engine/types.js';
import { binaryCohort, continuousCohort } from './support/synthetic.js';

const spec: AnalysisSpec = {
  outcome: { column: 'y', type: 'binary' },
  exposure: { column: 'a', reference: '0' },
  modifier: { column: 'm', type: 'categorical', reference: 'm0' },
  covariates: [{ column: 'x', type: 'continuous' }],
  model: 'logistic',
  ci: { level: 0.95, method: 'delta' },
};
const cohort = binaryCohort({
  n: 4000, seed: 23, link: 'logit', intercept: -0.8, exposure: 0.5, modifier: [0.2, 0.7, -0.4], product: [0.3, -0.5, 0.6], covariate: 0.4,
});

function expectSameDesign(derived: DesignMatrix, built: DesignMatrix): void {
  expect(derived.columns).toBe(built.columns);
  expect(derived.terms).toEqual(built.terms);
  expect(derived.cellCount).toBe(built.cellCount);
  expect(Array.from(derived.cellOfRow)).toEqual(Array.from(built.cellOfRow));
  expect(Array.from(derived.cellTerms)).toEqual(Array.from(built.cellTerms));
  expect(Array.from(derived.cellValues)).toEqual(Array.from(built.cellValues));
  expect(Array.from(derived.freeTerms)).toEqual(Array.from(built.freeTerms));
  expect(Array.from(derived.free)).toEqual(Array.from(built.free));
  expect(derived.exposureIndex).toBe(built.exposureIndex);
  expect(derived.modifierIndices).toEqual(built.modifierIndices);
  expect(derived.productIndices).toEqual([]);
  expect(derived.covariateIndices).toEqual(built.covariateIndices);
}

describe('the refit without product terms', () => {
  const frame = buildAnalysisFrame(cohort, spec);
  const full = buildDesignMatrix(frame, { includeProducts: true, centre: 0 });

  it('takes its design from the full one, equal to the design built without products', () => {
    expectSameDesign(designWithoutProducts(frame, full), buildDesignMatrix(frame, { includeProducts: false, centre: 0 }));
    // Shared, not copied: the rows' cells and the free block are the full design's own.
    expect(designWithoutProducts(frame, full).free).toBe(full.free);
  });

  it('builds the design afresh for a continuous modifier (the products are free terms)', () => {
    const data = continuousCohort({ n: 500, seed: 5, b: [1, 0.5, 0.3, 0.2], covariate: 0.4, sigma: 1 });
    const linear: AnalysisSpec = { ...spec, outcome: { column: 'y', type: 'continuous' }, modifier: { column: 'w', type: 'continuous', centre: 'mean' }, model: 'linear' };
    const continuousFrame = buildAnalysisFrame(data, linear);
    const centre = 0.25;
    const fullContinuous = buildDesignMatrix(continuousFrame, { includeProducts: true, centre });
    expectSameDesign(designWithoutProducts(continuousFrame, fullContinuous), buildDesignMatrix(continuousFrame, { includeProducts: false, centre }));
  });

  it('started from the restricted estimate, reaches the maximum of the default start in fewer steps', () => {
    const fit = fitModel(full, frame.outcome, 'logistic');
    const reducedDesign = designWithoutProducts(frame, full);
    const start = restrictedStart(fit.coefficients, fit.covariance, full.columns, full.productIndices);
    expect(start).not.toBeNull();
    const warm = fitModel(reducedDesign, frame.outcome, 'logistic', { start });
    const cold = fitModel(reducedDesign, frame.outcome, 'logistic');
    expect(warm.converged).toBe(true);
    expect(warm.iterations).toBeLessThan(cold.iterations);
    // Both are the maximum to about 1e-10 on the linear-predictor scale (the IRLS rule).
    expect(Math.abs(warm.logLik - cold.logLik)).toBeLessThan(1e-8 * Math.abs(cold.logLik));
    cold.coefficients.forEach((value, j) => expect(Math.abs(warm.coefficients[j] - value)).toBeLessThan(1e-8 * Math.max(1, Math.abs(value))));
    cold.covariance.forEach((value, j) => expect(Math.abs(warm.covariance[j] - value)).toBeLessThan(1e-8 * Math.max(1e-12, Math.abs(value))));
  });
});
