/**
 * Seeded simulation of the standardized risk difference (invented data; the generator in
 * support/synthetic.ts sets the truth). With a logistic truth and x ~ N(0, 1), the true
 * standardized RD within level m is E_x[expit(η(1, m, x)) − expit(η(0, m, x))], integrated
 * here over the normal density by a fine trapezoid rule (error far below the tolerances).
 */
import { describe, expect, it } from 'vitest';
import { runAnalysis } from '@/engine/index.js';
import type { AnalysisSpec } from '@/engine/types.js';
import { binaryCohort, type BinaryTruth } from './support/synthetic.js';

const spec: AnalysisSpec = {
  outcome: { column: 'y', type: 'binary' },
  exposure: { column: 'a', reference: '0' },
  modifier: { column: 'm', type: 'categorical', reference: 'm0' },
  covariates: [{ column: 'x', type: 'continuous' }],
  model: 'logistic',
  ci: { level: 0.95, method: 'delta' },
  standardize: true,
};

const base: Omit<BinaryTruth, 'n' | 'seed' | 'stream'> = {
  link: 'logit',
  intercept: -1,
  exposure: Math.log(0.6),
  modifier: [Math.log(2)],
  product: [Math.log(0.7)],
  covariate: 0.8,
};

const expit = (eta: number) => 1 / (1 + Math.exp(-eta));

/** True standardized RD in level k (0 = m0): trapezoid over x in [−10, 10], 40,001 points. */
function trueDifference(k: number): number {
  const offset = k > 0 ? base.modifier[k - 1] : 0;
  const product = k > 0 ? base.product[k - 1] : 0;
  const points = 40_000;
  const h = 20 / points;
  let sum = 0;
  for (let i = 0; i <= points; i++) {
    const x = -10 + i * h;
    const density = Math.exp(-0.5 * x * x) / Math.sqrt(2 * Math.PI);
    const value = expit(base.intercept + base.exposure + offset + product + base.covariate * x) - expit(base.intercept + offset + base.covariate * x);
    sum += (i === 0 || i === points ? 0.5 : 1) * value * density;
  }
  return sum * h;
}

describe('standardized RD recovers the generator\'s truth', () => {
  const truths = [trueDifference(0), trueDifference(1)];

  it('a large cohort estimates each level\'s RD and the interaction contrast within 4 standard errors, with small standard errors', async () => {
    const result = await runAnalysis(binaryCohort({ ...base, n: 200_000, seed: 20261202 }), spec, { threads: 0 });
    const levels = result.standardized!.levels;
    levels.forEach((level, k) => {
      const rd = level.riskDifference;
      expect(rd.se!).toBeLessThan(0.005);
      expect(Math.abs(rd.estimate! - truths[k]), `${level.level}: ${rd.estimate} vs truth ${truths[k]}`).toBeLessThan(4 * rd.se!);
    });
    const ic = levels[1].interactionContrast!;
    expect(Math.abs(ic.estimate! - (truths[1] - truths[0]))).toBeLessThan(4 * ic.se!);
  });

  it('95% delta-method intervals of the RD cover the truth in 90% to 99% of 200 seeded cohorts', async () => {
    let covered = 0;
    let total = 0;
    for (let stream = 0; stream < 200; stream++) {
      const result = await runAnalysis(binaryCohort({ ...base, n: 1500, seed: 20261203, stream }), spec, { threads: 0 });
      result.standardized!.levels.forEach((level, k) => {
        total++;
        if (level.riskDifference.lower! <= truths[k] && truths[k] <= level.riskDifference.upper!) covered++;
      });
    }
    // 400 intervals; binomial sd of the proportion about 1.1 %, so 90–99 % is a wide band.
    expect(covered / total).toBeGreaterThan(0.9);
    expect(covered / total).toBeLessThan(0.99);
  });
});
