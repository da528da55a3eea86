/**
 * The variance in use, clusters, person-time rates, overdispersion and frequency weights on
 * the results page (ResultTables.astro's card: resultTablesRendering.test.ts), in the CSV
 * and in the brief's methods paragraph, from real engine
 * results on the seeded synthetic wards of tests/reference/cluster-rate-weight (invented
 * data, written by tests/reference/r/make-cluster-rate-weight-fixtures.R). The crude rates
 * are checked against that script's aggregate() sums × 1000 (fixture wards-rate-poisson).
 */
import { readFileSync } from 'node:fs';
import { beforeAll, describe, expect, it } from 'vitest';
import { ResultSchema, type Result, type Spec } from '@/engine/boundary/schemas';
import { runAnalysis } from '@/engine/index';
import { buildBriefContent } from '../briefs/briefContent';
import { FACTS } from '../briefs/briefTestSupport';
import { engineDataOfCsv } from './engineInput';
import { resultCsv } from './resultCsv';
import { buildResultTables } from './resultTables';

const root = new URL('../../../tests/reference/cluster-rate-weight/', import.meta.url);
const wards = engineDataOfCsv(readFileSync(new URL('data/wards.csv', root)));
const fixture = JSON.parse(readFileSync(new URL('fixtures/wards-rate-poisson.json', root), 'utf8')) as {
  rates: { exposure: string; modifier: string; ratePer1000: number }[];
};

const SPEC: Spec = {
  outcome: { column: 'falls', type: 'count', personTime: 'bed_days' },
  exposure: { column: 'called', reference: '0' },
  modifier: { column: 'frailty', type: 'categorical', reference: 'low' },
  covariates: [{ column: 'age', type: 'continuous' }],
  model: 'poisson',
  ci: { level: 0.95, method: 'delta' },
  cluster: { column: 'site' },
};

describe('clusters, rates and weights through the results, the CSV and the brief', () => {
  let result: Result;
  let weighted: Result;
  beforeAll(async () => {
    result = ResultSchema.parse(await runAnalysis(wards, SPEC, { threads: 0, personTimeUnit: 'bed-days' }));
    weighted = ResultSchema.parse(await runAnalysis(wards, { ...SPEC, weights: { column: 'count' } }, { threads: 0, personTimeUnit: 'bed-days' }));
  });

  it('names the variance with its clusters, calls the measure a rate ratio and shows rates per 1,000 bed-days', () => {
    const tables = buildResultTables(result, SPEC);
    expect(tables.measure.name).toBe('rate ratio');
    expect(tables.modelLine).toMatch(/cluster-robust \(CR1, Liang and Zeger 1986\) standard errors \(40 clusters\)\.$/);
    expect(tables.extras.varianceLine).toMatch(/^Standard errors: cluster-robust \(CR1, Liang and Zeger 1986\), 40 clusters of site/);
    expect(tables.extras.rates?.heading).toBe('Crude rates per 1,000 bed-days');
    for (const expected of fixture.rates) {
      const row = tables.extras.rates!.rows.find((r) => r.exposure === expected.exposure && r.level === expected.modifier)!;
      // R: 1000 * sum(falls) / sum(bed_days) by arm and frailty (aggregate()).
      expect(Math.abs((row.value as number) - expected.ratePer1000)).toBeLessThanOrEqual(1e-8 * expected.ratePer1000);
    }
    expect(tables.extras.overdispersion?.text).toMatch(/^Overdispersion check: Pearson χ² [\d.]+ on 1,593 df, ratio [\d.]+/);
    expect(tables.extras.weights).toBeNull();
    expect(buildResultTables(weighted, { ...SPEC, weights: { column: 'count' } }).extras.weights).toMatch(/^Frequency weights from count: 1,600 rows stand for [\d,]+ units/);
  });

  it('puts the variance, the rates and the overdispersion check in the CSV', () => {
    const csv = resultCsv(weighted, { ...SPEC, weights: { column: 'count' } });
    expect(csv).toMatch(/\nvariance,,,"?cluster-robust \(CR1, Liang and Zeger 1986\)"?,,,,,,,40,/);
    expect(csv.split('\n').filter((line) => line.startsWith('rate,'))).toHaveLength(6);
    expect(csv).toMatch(/\nrate,low,0,events per 1000 bed-days,/);
    expect(csv).toMatch(/\noverdispersion,,,Pearson chi-square \/ df,/);
    expect(csv).toMatch(/\nweights,count,,rows standing for units,/);
  });

  it('explains them in the brief\'s methods paragraph', () => {
    const content = buildBriefContent(weighted, { ...SPEC, weights: { column: 'count' } }, FACTS, { title: 'Falls', summary: 'A first look.', plot: 'forest', ownCautions: [] });
    expect(content.methods).toMatch(/Standard errors are cluster-robust \(CR1, Liang and Zeger 1986\), with 40 clusters of site, and every interval uses them\./);
    expect(content.methods).toMatch(/Poisson regression with the logarithm of bed_days \(bed-days\) as offset, so effects are rate ratios and rates are given per 1,000 bed-days; overdispersion was checked by Pearson χ²\/df/);
    expect(content.methods).toMatch(/weighted by count \(frequency weights\)/);
    expect(content.methods).toMatch(/effect measure is the rate ratio/);
  });
});
