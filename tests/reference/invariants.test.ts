/**
 * Invariants that hold whatever the data (issue 4 and style.md): recoding the intervention
 * flips differences; data without interaction give an omnibus statistic of 0; row order
 * does not matter; preventive recoding equals choosing the other reference; the bootstrap
 * gives the same bits in-process and on worker threads.
 */
import { describe, expect, it } from 'vitest';
import { runAnalysis } from '@/engine/index.js';
import type { AnalysisResult, AnalysisSpec, EngineData } from '@/engine/types.js';
import { binaryCohort, continuousCohort, shuffleRows } from './support/synthetic.js';
import { expectClose } from './support/tolerance.js';

const binarySpec: AnalysisSpec = {
  outcome: { column: 'y', type: 'binary' },
  exposure: { column: 'a', reference: '0' },
  modifier: { column: 'm', type: 'categorical', reference: 'm0' },
  covariates: [{ column: 'x', type: 'continuous' }],
  model: 'logistic',
  ci: { level: 0.95, method: 'delta' },
};
const cohort = binaryCohort({
  n: 3000, seed: 11, link: 'logit', intercept: -1, exposure: 0.4, modifier: [0.3, 0.6], product: [0.2, -0.3], covariate: 0.5,
});

/** Every number in two results agrees to a relative tolerance (same shape required). */
function expectSameNumbers(left: unknown, right: unknown, path = ''): void {
  if (typeof left === 'number' && typeof right === 'number') {
    expectClose(left, right, path, 1e-9, 1e-12);
    return;
  }
  if (Array.isArray(left) && Array.isArray(right)) {
    expect(left.length, path).toBe(right.length);
    left.forEach((value, index) => expectSameNumbers(value, right[index], `${path}[${index}]`));
    return;
  }
  if (left !== null && typeof left === 'object' && right !== null && typeof right === 'object') {
    expect(Object.keys(left).sort(), path).toEqual(Object.keys(right).sort());
    for (const key of Object.keys(left)) expectSameNumbers((left as Record<string, unknown>)[key], (right as Record<string, unknown>)[key], `${path}.${key}`);
    return;
  }
  expect(left, path).toEqual(right);
}

describe('invariants', () => {
  it('swapping the intervention coding flips the sign of every difference (linear model)', async () => {
    const data = continuousCohort({ n: 800, seed: 3, b: [1, 0.5, 0.2, 0.3], covariate: 0.4, sigma: 1 });
    const spec: AnalysisSpec = {
      outcome: { column: 'y', type: 'continuous' }, exposure: { column: 'a', reference: '0' },
      modifier: { column: 'w', type: 'continuous' }, covariates: [{ column: 'x', type: 'continuous' }], model: 'linear', ci: { level: 0.95, method: 'delta' },
    };
    const coded = await runAnalysis(data, spec);
    const swapped = await runAnalysis(data, { ...spec, exposure: { column: 'a', reference: '1' } });
    coded.slopes!.forEach((slope, k) => {
      expectClose(swapped.slopes![k].estimate, -slope.estimate!, `slope ${slope.label}`, 1e-9, 1e-12);
      expectClose(swapped.slopes![k].se, slope.se!, `slope se ${slope.label}`, 1e-9);
    });
    const difference = coded.interaction.additive[0].differenceInDifferences!;
    expectClose(swapped.interaction.additive[0].differenceInDifferences!.estimate, -difference.estimate!, 'difference of differences', 1e-9, 1e-12);
  });

  it('swapping the intervention coding inverts every ratio (logistic model)', async () => {
    const coded = await runAnalysis(cohort, binarySpec);
    const swapped = await runAnalysis(cohort, { ...binarySpec, exposure: { column: 'a', reference: '1' } });
    coded.strata.forEach((stratum, k) => expectClose(swapped.strata[k].effect.estimate, 1 / stratum.effect.estimate!, `stratum ${stratum.level}`, 1e-9));
    coded.interaction.multiplicative.forEach((entry, k) =>
      expectClose(swapped.interaction.multiplicative[k].estimate, 1 / entry.estimate!, `ratio of ORs ${entry.level}`, 1e-9));
    expectClose(swapped.interaction.omnibus.statistic, coded.interaction.omnibus.statistic!, 'omnibus statistic', 1e-9);
  });

  it('a model without interaction fits data with none exactly: omnibus statistic 0 (logistic LR and linear F)', async () => {
    // Cell counts built so that the odds are 1, 2, 3 and 6: OR11 = OR10 · OR01 exactly.
    const cells: [number, number, number, number][] = [
      // [a, m, events, non-events]
      [0, 0, 10, 10], [1, 0, 20, 10], [0, 1, 30, 10], [1, 1, 60, 10],
    ];
    const rows = cells.flatMap(([a, m, events, nonEvents]) => [
      ...Array.from({ length: events }, () => [a, m, 1]),
      ...Array.from({ length: nonEvents }, () => [a, m, 0]),
    ]);
    const data: EngineData = {
      rowCount: rows.length,
      columns: {
        a: { kind: 'numeric', values: Float64Array.from(rows, (r) => r[0]) },
        m: { kind: 'categorical', codes: Int32Array.from(rows, (r) => r[1]), levels: ['lo', 'hi'] },
        y: { kind: 'numeric', values: Float64Array.from(rows, (r) => r[2]) },
        // Linear outcome with cell means 1, 3, 2, 4 (additive: 1 + 2a + 1m) and symmetric noise.
        z: { kind: 'numeric', values: Float64Array.from(rows, (r, i) => 1 + 2 * r[0] + r[1] + (i % 2 === 0 ? 0.5 : -0.5)) },
      },
    };
    const spec: AnalysisSpec = { ...binarySpec, modifier: { column: 'm', type: 'categorical', reference: 'lo' }, covariates: [] };
    const logistic = await runAnalysis(data, spec);
    expect(logistic.interaction.omnibus.statistic).toBeLessThan(1e-9);
    expect(logistic.interaction.multiplicative[0].estimate).toBeCloseTo(1, 9);
    const linear = await runAnalysis(data, { ...spec, outcome: { column: 'z', type: 'continuous' }, model: 'linear' });
    expect(linear.interaction.omnibus.test).toBe('F');
    expect(linear.interaction.omnibus.statistic).toBeLessThan(1e-9);
  });

  it('shuffling the rows changes nothing', async () => {
    for (const method of ['delta', 'mover'] as const) {
      const original = await runAnalysis(cohort, { ...binarySpec, ci: { level: 0.95, method } });
      const shuffled = await runAnalysis(shuffleRows(cohort, 5), { ...binarySpec, ci: { level: 0.95, method } });
      expectSameNumbers(shuffled, original, method);
    }
  });

  it('preventive recoding equals analysing with the other reference level when the intervention is protective', async () => {
    const protective = binaryCohort({
      n: 4000, seed: 21, link: 'logit', intercept: -1, exposure: -0.7, modifier: [0.5], product: [-0.2], covariate: 0,
    });
    const spec: AnalysisSpec = { ...binarySpec, covariates: [], model: 'logistic' };
    const recoded = await runAnalysis(protective, { ...spec, preventive: true });
    const reversed = await runAnalysis(protective, { ...spec, exposure: { column: 'a', reference: '1' } });
    const entry = recoded.interaction.additive[0];
    expect(entry.reference).toEqual({ exposure: '1', modifier: 'm0' });
    for (const key of ['reri', 'ap', 'apStar', 's'] as const) {
      expectClose(entry[key]!.estimate, reversed.interaction.additive[0][key]!.estimate!, `${key} estimate`, 1e-9);
      expectClose(entry[key]!.se, reversed.interaction.additive[0][key]!.se!, `${key} se`, 1e-9);
    }
    expect((await runAnalysis(protective, spec)).warnings.map((w) => w.code)).toContain('PREVENTIVE_EXPOSURE');
  });
});

describe('threaded fits', () => {
  it('a fit split across two threads gives the same bits as one thread (blocked sums)', async () => {
    // 150,000 rows = 3 blocks of 65,536; parallelFitRows 0 forces the pass pool.
    const large = binaryCohort({
      n: 150_000, seed: 12, link: 'logit', intercept: -1, exposure: 0.4, modifier: [0.3, 0.6], product: [0.2, -0.3], covariate: 0.5,
    });
    for (const model of ['logistic', 'modified-poisson'] as const) {
      const single = await runAnalysis(large, { ...binarySpec, model }, { threads: 0 });
      const threaded = await runAnalysis(large, { ...binarySpec, model }, { threads: 2, parallelFitRows: 0 });
      expect(JSON.stringify(threaded), model).toBe(JSON.stringify(single));
    }
    const linearData = continuousCohort({ n: 140_000, seed: 4, b: [1, 0.5, 0.2, 0.3], covariate: 0.4, sigma: 1 });
    const linearSpec: AnalysisSpec = {
      outcome: { column: 'y', type: 'continuous' }, exposure: { column: 'a', reference: '0' },
      modifier: { column: 'w', type: 'continuous' }, covariates: [{ column: 'x', type: 'continuous' }], model: 'linear', ci: { level: 0.95, method: 'delta' },
    };
    expect(JSON.stringify(await runAnalysis(linearData, linearSpec, { threads: 2, parallelFitRows: 0 }))).toBe(
      JSON.stringify(await runAnalysis(linearData, linearSpec, { threads: 0 })),
    );
  });
});

describe('bootstrap reproducibility', () => {
  const spec: AnalysisSpec = { ...binarySpec, ci: { level: 0.95, method: 'bootstrap', replicates: 200, seed: 42 } };
  let inProcess: AnalysisResult;
  it('in-process and two worker threads give identical bits', async () => {
    inProcess = await runAnalysis(cohort, spec, { threads: 0 });
    const threaded = await runAnalysis(cohort, spec, { threads: 2 });
    expect(JSON.stringify(threaded)).toBe(JSON.stringify(inProcess));
    expect(inProcess.seed).toBe(42);
    expect(inProcess.bootstrap).toMatchObject({
      replicates: 200, successful: 200, failed: 0, seed: 42, flagged: false,
      failures: { notConverged: 0, separated: 0, fitFailed: 0, undefinedMeasure: 0 },
    });
    expect(inProcess.interaction.additive[0].reri!.method).toBe('bootstrap');
  });
  it('another seed gives other limits; the percentile limits bracket the estimate', async () => {
    const other = await runAnalysis(cohort, { ...spec, ci: { ...spec.ci, seed: 43 } }, { threads: 0 });
    const reri = inProcess.interaction.additive[0].reri!;
    expect(other.interaction.additive[0].reri!.lower).not.toBe(reri.lower);
    expect(reri.lower! < reri.estimate! && reri.estimate! < reri.upper!).toBe(true);
  });
  it('progress is reported and an abort stops the run with a cancellation error', async () => {
    const fractions: number[] = [];
    await runAnalysis(cohort, spec, { threads: 0, onProgress: (event) => event.stage === 'bootstrap' && fractions.push(event.fraction) });
    expect(fractions.length).toBeGreaterThan(50);
    expect(fractions.at(-1)).toBe(1);
    const controller = new AbortController();
    const run = runAnalysis(cohort, { ...spec, ci: { ...spec.ci, replicates: 5000 } }, {
      threads: 2,
      signal: controller.signal,
      onProgress: (event) => event.stage === 'bootstrap' && event.fraction > 0.02 && controller.abort(),
    });
    await expect(run).rejects.toMatchObject({ code: 'CANCELLED' });
  });
});
