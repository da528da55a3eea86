/**
 * Clustered rows, person-time rates and frequency weights against base R. Every expected
 * number comes from the fixture named in the test title, written by
 * tests/reference/r/make-cluster-rate-weight-fixtures.R under R 4.2.2 (the fixture records
 * R.version.string) from glm() (fully converged: glm.control(epsilon = 1e-14, maxit = 100),
 * refitted until coef() stops changing) and lm(), with:
 * - rates: glm(falls ~ called * frailty + age + offset(log(bed_days)), family = poisson);
 *   Pearson χ²: sum(residuals(fit, "pearson")^2); crude rates: aggregate() sums × 1000;
 * - CR1: written by hand, G/(G−1)·(n−1)/(n−p)·B crossprod(rowsum(X·w·s, site)) B;
 * - HC0: B crossprod(X·(y − μ)) B with B = summary(fit)$cov.unscaled;
 * - frequency weights: glm(..., weights = count) (esoph as grouped counts; the seeded
 *   wards with counts 1-4), residual df sum(count) − p.
 * Strata, ratios of ratios, RERI, AP, AP*, S and the omnibus Wald test are the script's
 * formulas on coef() and the variance in use (make-fixtures.R's categorical_case).
 * Tolerance 1e-8 relative (p-values 1e-7).
 */
import { readFileSync, readdirSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { runAnalysis } from '@/engine/index.js';
import { ResultSchema } from '@/engine/boundary/schemas.js';
import type { AnalysisResult, AnalysisSpec, EngineData } from '@/engine/types.js';
import { engineDataOfCsv } from '@/features/runs/engineInput.js';
import { expectClose } from './support/tolerance.js';
import { referenceRoot, type Fixture, type RAdditive, type RInterval } from './support/loadFixtures.js';

const root = `${referenceRoot}/cluster-rate-weight`;
type CrwFixture = Fixture & {
  dataset: string;
  clusters?: number;
  units?: number;
  pearsonChiSquare?: number;
  pearsonDf?: number;
  rates?: { exposure: string; modifier: string; events: number; personTime: number; ratePer1000: number }[];
};
const names = readdirSync(`${root}/fixtures`).filter((name) => name.endsWith('.json')).map((name) => name.replace(/\.json$/, '')).sort();
const load = (name: string): CrwFixture => JSON.parse(readFileSync(`${root}/fixtures/${name}.json`, 'utf8')) as CrwFixture;
const dataset = (name: string): EngineData => engineDataOfCsv(readFileSync(`${root}/data/${name}.csv`));

/** R's name for an engine term: "frailty=high" → "frailtyhigh", "called × frailty=high" → "called:frailtyhigh". */
function rTerm(term: string): string {
  if (term === '(Intercept)') return term;
  return term.split(' × ').map((part) => part.replace('=', '').replace(/^(called|alcohol_high)1$/, '$1')).join(':');
}

function compare(actual: { estimate: number | null; lower: number | null; upper: number | null; se?: number | null; p?: number | null }, expected: RInterval, label: string): void {
  expectClose(actual.estimate, expected.estimate, `${label} estimate`);
  expectClose(actual.lower, expected.lower, `${label} lower`);
  expectClose(actual.upper, expected.upper, `${label} upper`);
  if (actual.se !== undefined) expectClose(actual.se, expected.se, `${label} se`);
  if (actual.p !== undefined) expectClose(actual.p, expected.p, `${label} p`, 1e-7);
}

function compareAll(result: AnalysisResult, fixture: CrwFixture): void {
  const terms = result.model.coefficients.map((c) => rTerm(c.term));
  expect([...terms].sort()).toEqual([...fixture.coefficients.term].sort());
  terms.forEach((term, j) => {
    const r = fixture.coefficients.term.indexOf(term);
    expectClose(result.model.coefficients[j].estimate, fixture.coefficients.estimate[r], `coefficient ${term} (coef())`);
    expectClose(result.model.coefficients[j].se, fixture.coefficients.se[r], `se ${term} (sqrt(diag(V)))`);
  });
  expectClose(result.model.logLik, fixture.logLik, 'logLik (logLik())');
  expectClose(result.model.deviance, fixture.deviance, 'deviance (deviance())');
  expect(result.model.residualDf, 'residual df').toBe(fixture.residualDf);
  expectClose(result.interaction.omnibus.statistic, fixture.omnibus.statistic, 'omnibus statistic');
  expect(result.interaction.omnibus.df).toBe(fixture.omnibus.df);
  expectClose(result.interaction.omnibus.p, fixture.omnibus.p, 'omnibus p', 1e-7);
  if (fixture.spec.modifier.type === 'continuous') {
    // Slopes at mean ± 1 SD, Johnson-Neyman (Bauer and Curran 2005 quadratic), band points,
    // ratio of ratios per unit and RERI/AP/AP*/S at +1 SD: make-fixtures.R's continuous_case.
    expectClose(result.modifier.mean, fixture.mean!, 'modifier mean (mean())');
    expectClose(result.modifier.sd, fixture.sd!, 'modifier sd (sd())');
    fixture.slopes!.forEach((expected, k) => compare(result.slopes![k], expected, `slope ${k}`));
    const jn = fixture.johnsonNeyman!;
    expect(result.johnsonNeyman!.bounds?.length ?? 0).toBe(jn.bounds.length);
    jn.bounds.forEach((bound, k) => expectClose(result.johnsonNeyman!.bounds![k], bound, `J-N bound ${k}`));
    for (const expected of fixture.band!) compare({ ...result.band![expected.index] }, expected, `band point ${expected.index}`);
    compare(result.interaction.multiplicative[0], fixture.multiplicative as RInterval, 'ratio of ratios per unit');
    const additive = fixture.additive as RAdditive;
    for (const key of ['reri', 'ap', 'apStar'] as const) compare(result.interaction.additive[0][key]!, { ...additive[key], p: Number.NaN }, `${key} +1 SD`);
    return;
  }
  const levels = fixture.levels!;
  levels.forEach((level, k) => compare(result.strata.find((s) => s.level === level)!.effect, fixture.strata![k], `stratum ${level}`));
  for (const expected of fixture.joint!) {
    const arm = result.exposure[expected.arm === 1 ? 'level' : 'reference'];
    compare(result.joint!.cells.find((c) => c.exposure === arm && c.modifier === expected.level)!.effect!, expected, `joint ${arm}/${expected.level}`);
  }
  if (result.model.family === 'linear') {
    for (const expected of fixture.differenceInDifferences!) {
      compare(result.interaction.additive.find((a) => a.level === expected.level)!.differenceInDifferences!, expected, `difference of differences ${expected.level}`);
    }
    return;
  }
  for (const expected of fixture.multiplicative as (RInterval & { level: string })[]) {
    compare(result.interaction.multiplicative.find((m) => m.level === expected.level)!, expected, `ratio of ratios ${expected.level}`);
  }
  for (const expected of fixture.additive as RAdditive[]) {
    const entry = result.interaction.additive.find((a) => a.level === expected.level)!;
    for (const key of ['reri', 'ap', 'apStar'] as const) compare(entry[key]!, { ...expected[key], p: Number.NaN }, `${key} ${expected.level}`);
    if (expected.s === null) expect(entry.s).toBeNull();
    else compare(entry.s!, { ...expected.s, p: Number.NaN }, `S ${expected.level}`);
  }
}

describe('clusters, rates and frequency weights against base R', () => {
  it('has the fixtures', () => expect(names.length).toBeGreaterThanOrEqual(7));

  for (const name of names) {
    it(`${name}: matches R (tests/reference/cluster-rate-weight/fixtures/${name}.json)`, async () => {
      const fixture = load(name);
      const result = await runAnalysis(dataset(fixture.dataset), fixture.spec, { threads: 0, personTimeUnit: 'bed-days' });
      expect(ResultSchema.safeParse(result).success).toBe(true);
      compareAll(result, fixture);
      if (fixture.clusters !== undefined) {
        expect(result.model.standardErrors).toBe('CR1');
        expect(result.clustering).toMatchObject({ column: 'site', method: 'cluster-robust (CR1, Liang and Zeger 1986)', clusters: fixture.clusters });
        expect(result.warnings.some((w) => w.code === 'FEW_CLUSTERS')).toBe(false); // 40 clusters
      } else expect(result.clustering).toBeNull();
      if (fixture.units !== undefined) {
        expect(result.n, 'n = sum(count)').toBe(fixture.units);
        expect(result.weights?.units).toBe(fixture.units);
      }
      if (fixture.pearsonChiSquare !== undefined) {
        expectClose(result.rates!.overdispersion.pearsonChiSquare, fixture.pearsonChiSquare, 'Pearson χ² (residuals(fit, "pearson"))');
        expect(result.rates!.overdispersion.df).toBe(fixture.pearsonDf);
        expect(result.rates!.unit).toBe('bed-days');
        for (const expected of fixture.rates!) {
          const cell = result.rates!.cells.find((c) => c.exposure === expected.exposure && c.modifier === expected.modifier)!;
          expect([cell.events, cell.personTime]).toEqual([expected.events, expected.personTime]);
          expectClose(cell.ratePer1000, expected.ratePer1000, `rate per 1,000 ${expected.exposure}/${expected.modifier} (aggregate())`);
        }
      }
    });
  }

  it('a weighted extract gives exactly what its expanded rows give, tables and bootstrap included (engine against itself)', async () => {
    // wards.csv with count 1-4 per row, and wards-expanded.csv with each row repeated count
    // times (written by the R script); percentile bootstrap of 200 replicates, seed 7.
    const spec: AnalysisSpec = {
      outcome: { column: 'readmitted', type: 'binary' },
      exposure: { column: 'called', reference: '0' },
      modifier: { column: 'frailty', type: 'categorical', reference: 'low' },
      covariates: [{ column: 'age', type: 'continuous' }],
      model: 'logistic',
      ci: { level: 0.95, method: 'bootstrap', replicates: 200, seed: 7 },
    };
    const weighted = await runAnalysis(dataset('wards'), { ...spec, weights: { column: 'count' } }, { threads: 0 });
    const expanded = await runAnalysis(dataset('wards-expanded'), spec, { threads: 0 });
    const strip = (result: AnalysisResult) => ({ ...result, weights: null, warnings: result.warnings.filter((w) => w.code !== 'FREQUENCY_WEIGHTS') });
    expect(weighted.stratifiedTables).not.toBeNull();
    expect(weighted.bootstrap?.successful).toBeGreaterThan(0);
    expect(strip(weighted)).toEqual(strip(expanded));
    expect(weighted.weights).toEqual({ column: 'count', rows: 1600, units: expanded.n });
  });
});

describe('refusals and warnings', () => {
  const base: AnalysisSpec = {
    outcome: { column: 'falls', type: 'count', personTime: 'bed_days' },
    exposure: { column: 'called', reference: '0' },
    modifier: { column: 'frailty', type: 'categorical', reference: 'low' },
    covariates: [],
    model: 'poisson',
    ci: { level: 0.95, method: 'delta' },
  };
  const csv = (rows: string[]) => engineDataOfCsv(Buffer.from(['falls,called,frailty,bed_days,site,count', ...rows].join('\n')));
  // Invented rows: every arm × frailty cell filled, 5 sites.
  const rows = Array.from({ length: 60 }, (_, i) => `${(i * 7) % 5},${i % 2},${['low', 'mid', 'high'][(i >> 1) % 3]},${10 + (i % 7)},s${i % 5},${1 + (i % 3)}`);

  it('refuses a person-time of zero, naming its line', async () => {
    const bad = [...rows];
    bad[4] = bad[4].replace(/,1[0-6],s/, ',0,s');
    await expect(runAnalysis(csv(bad), base, { threads: 0 })).rejects.toThrow(/person-time "bed_days" is 0 on data row 5; person-time must be positive/);
  });

  it('refuses weights that are not positive whole numbers, naming the row', async () => {
    const bad = [...rows];
    bad[2] = bad[2].replace(/,\d$/, ',1.5');
    await expect(runAnalysis(csv(bad), { ...base, weights: { column: 'count' } }, { threads: 0 })).rejects.toThrow(/weight "count" is 1.5 on data row 3/);
  });

  it('refuses a cluster column that is the modifier or the intervention, person-time with a binary outcome, and the bootstrap with clusters', async () => {
    const data = csv(rows);
    await expect(runAnalysis(data, { ...base, cluster: { column: 'frailty' } })).rejects.toThrow(/cluster column "frailty" is the modifier/);
    await expect(runAnalysis(data, { ...base, cluster: { column: 'called' } })).rejects.toThrow(/cluster column "called" is the intervention/);
    await expect(runAnalysis(data, { ...base, model: 'logistic', outcome: { column: 'called', type: 'binary', personTime: 'bed_days' } })).rejects.toThrow(/count outcome/);
    await expect(runAnalysis(data, { ...base, cluster: { column: 'site' }, ci: { level: 0.95, method: 'bootstrap' } })).rejects.toThrow(/resamples rows, not clusters/);
    const oneSite = csv(rows.map((row) => row.replace(/,s\d,/, ',s0,')));
    await expect(runAnalysis(oneSite, { ...base, cluster: { column: 'site' } })).rejects.toThrow(/has a single cluster among the analysed rows/);
  });

  it('warns under 30 clusters (common practice) and counts rows missing a cluster like other missing values', async () => {
    const withMissing = [...rows];
    withMissing[7] = withMissing[7].replace(/,s\d,/, ',,');
    const result = await runAnalysis(csv(withMissing), { ...base, cluster: { column: 'site' } }, { threads: 0 });
    expect(result.clustering?.clusters).toBe(5);
    expect(result.warnings.find((w) => w.code === 'FEW_CLUSTERS')?.message).toMatch(/Only 5 clusters/);
    expect(result.dropped).toBe(1);
    expect(result.missingByColumn).toEqual([{ column: 'site', rows: 1 }]);
  });
});
