/**
 * A continuous intervention (dose), the test for trend across an ordered modifier, and the
 * profile plot's predictions at stated covariate values, against base R. Every expected
 * number comes from tests/reference/dose/fixtures.json, written by
 * tests/reference/r/make-dose-fixtures.R under R 4.2.2 (the file records R.version.string)
 * on its seeded synthetic cohort (set.seed(20261202); invented data whose truth the script
 * sets). The R call behind each number is named beside its check. Every glm() is fully
 * converged: glm.control(epsilon = 1e-14, maxit = 100), refitted until coef() stops moving.
 * Tolerance: 1e-8 relative (p-values 1e-7), as in r-fixtures.test.ts.
 */
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { runAnalysis } from '@/engine/index.js';
import { ResultSchema } from '@/engine/boundary/schemas.js';
import type { AnalysisResult, AnalysisSpec } from '@/engine/types.js';
import { engineDataOfCsv } from '@/features/runs/engineInput.js';
import { referenceRoot } from './support/loadFixtures.js';
import { expectClose } from './support/tolerance.js';

interface RWald { estimate: number; se: number; lower: number; upper: number; p: number }
interface RLine { exposure: number; fit: number[]; se: number[] }
interface RCase {
  spec: AnalysisSpec;
  coefficients?: { term: string[]; estimate: number[]; se: number[] };
  slopes?: Record<string, RWald>;
  differences?: Record<string, RWald>;
  omnibus?: { statistic: number; df: number; df2?: number; p: number };
  conditionalSlopes?: (RWald & { at: number })[];
  johnsonNeyman?: { leading: number; bounds: number[] };
  trend?: RWald;
  likelihoodRatio?: { statistic: number; df: number; p: number };
  held?: Record<string, number | string>;
  predictions?: RLine[];
}

const fixtures = JSON.parse(readFileSync(`${referenceRoot}/dose/fixtures.json`, 'utf8')) as Record<string, RCase>;
const data = engineDataOfCsv(readFileSync(`${referenceRoot}/dose/cohort.csv`));

async function run(name: string): Promise<{ result: AnalysisResult; fixture: RCase }> {
  const fixture = fixtures[name];
  const result = await runAnalysis(data, fixture.spec, { threads: 1 });
  ResultSchema.parse(result);
  return { result, fixture };
}

/** R's coefficient name for an engine term ("frailty=mid" → "frailtymid", "minutes × frailty=mid" → "minutes:frailtymid"). */
function rName(term: string): string {
  return term.split(' × ').map((part) => part.replace('=', '')).join(':');
}

function compareWald(actual: { estimate: number | null; se: number | null; lower: number | null; upper: number | null; p: number | null }, expected: RWald, label: string): void {
  expectClose(actual.estimate, expected.estimate, `${label} estimate`);
  expectClose(actual.se, expected.se, `${label} se`);
  expectClose(actual.lower, expected.lower, `${label} lower`);
  expectClose(actual.upper, expected.upper, `${label} upper`);
  expectClose(actual.p, expected.p, `${label} p`, 1e-7);
}

function compareCoefficients(result: AnalysisResult, fixture: RCase): void {
  const r = fixture.coefficients as NonNullable<RCase['coefficients']>;
  expect(result.model.coefficients.map((c) => rName(c.term)).sort()).toEqual([...r.term].sort());
  for (const c of result.model.coefficients) {
    const k = r.term.indexOf(rName(c.term));
    expectClose(c.estimate, r.estimate[k], `coef ${c.term}`); // coef(fit)
    expectClose(c.se, r.se[k], `se ${c.term}`); // sqrt(diag(vcov(fit)))
  }
}

const RLEVELS = ['low', 'mid', 'high'];

function comparePredictions(result: AnalysisResult, fixture: RCase, lines: number[]): void {
  const predictions = result.predictions;
  expect(predictions?.method).toBe('typical-values');
  for (const held of predictions?.covariates ?? []) {
    const expected = fixture.held?.[held.column];
    if (held.held === 'mean') expectClose(held.value, expected as number, `${held.column} held at mean(d$${held.column})`);
    else expect(held.level, `${held.column} held at names(which.max(table(d$${held.column})))`).toBe(expected);
  }
  (fixture.predictions as RLine[]).forEach((line, k) => {
    const engine = predictions?.lines[lines[k]];
    expectClose(engine?.exposure, line.exposure, `line ${k} exposure value`);
    line.fit.forEach((fit, j) => {
      // R's newdata rows are the levels low, mid, high (expand.grid), or the 41-point grid of the continuous modifier.
      const point = engine?.points[0].level === null ? engine?.points[j] : engine?.points.find((entry) => entry.level === RLEVELS[j]);
      // predict(fit, newdata, type = "link", se.fit = TRUE)$fit and $se.fit
      expectClose(point?.linearPredictor, fit, `line ${k} point ${j} linear predictor`);
      expectClose(point?.se, line.se[j], `line ${k} point ${j} se`);
    });
  });
}

describe('continuous intervention (dose) against base R', () => {
  it('dose-logistic-categorical: slopes per level, differences, LR omnibus, predictions at mean age and the most common sex', async () => {
    const { result, fixture } = await run('dose-logistic-categorical');
    compareCoefficients(result, fixture);
    expect(result.exposure.type).toBe('continuous');
    expect(result.dose?.scale).toBe('log-odds');
    expect(result.dose?.interval).toBe('z');
    for (const slope of result.dose?.slopes ?? []) compareWald(slope, (fixture.slopes as Record<string, RWald>)[slope.level], `slope ${slope.level}`); // coef sums, vcov quadratic, qnorm
    expect(result.dose?.differences.map((d) => d.level).sort()).toEqual(['high', 'mid']);
    for (const diff of result.dose?.differences ?? []) compareWald(diff, (fixture.differences as Record<string, RWald>)[diff.level], `difference ${diff.level}`);
    // The strata carry the same slopes per unit on the odds-ratio scale: exp(b_A + b_{A:m}).
    for (const stratum of result.strata) expectClose(stratum.effect.estimate, Math.exp((fixture.slopes as Record<string, RWald>)[stratum.level].estimate), `OR per unit in ${stratum.level}`);
    const omnibus = fixture.omnibus as NonNullable<RCase['omnibus']>;
    expect(result.interaction.omnibus.test).toBe('likelihood-ratio');
    expectClose(result.interaction.omnibus.statistic, omnibus.statistic, 'LR statistic'); // anova(reduced, full, test = "LRT")$Deviance
    expectClose(result.interaction.omnibus.p, omnibus.p, 'LR p', 1e-7);
    expect(result.interaction.additive).toEqual([]);
    expect(result.joint).toBeNull();
    expect(result.stratifiedTables).toBeNull();
    expect(result.additiveNote).toMatch(/do not apply to a continuous intervention/);
    comparePredictions(result, fixture, [0, 1, 2]);
  });

  it('dose-linear-categorical: slopes with t limits, F omnibus, predictions at the mean dose', async () => {
    const { result, fixture } = await run('dose-linear-categorical');
    compareCoefficients(result, fixture);
    expect(result.dose?.interval).toBe('t');
    for (const slope of result.dose?.slopes ?? []) compareWald(slope, (fixture.slopes as Record<string, RWald>)[slope.level], `slope ${slope.level}`); // qt(0.975, df.residual)
    for (const diff of result.dose?.differences ?? []) compareWald(diff, (fixture.differences as Record<string, RWald>)[diff.level], `difference ${diff.level}`);
    const omnibus = fixture.omnibus as NonNullable<RCase['omnibus']>;
    expect(result.interaction.omnibus.test).toBe('F');
    expectClose(result.interaction.omnibus.statistic, omnibus.statistic, 'F'); // anova(lm reduced, lm full)$F
    expect(result.interaction.omnibus.df2).toBe(omnibus.df2);
    expectClose(result.interaction.omnibus.p, omnibus.p, 'F p', 1e-7);
    comparePredictions(result, fixture, [1]);
  });

  it('dose-logistic-continuous: conditional slopes at mean ± 1 SD, Johnson-Neyman, predicted lines across the range', async () => {
    const { result, fixture } = await run('dose-logistic-continuous');
    compareCoefficients(result, fixture);
    const slopes = result.slopes ?? [];
    expect(slopes).toHaveLength(3);
    (fixture.conditionalSlopes ?? []).forEach((expected, k) => {
      expectClose(slopes[k].at, expected.at, `at ${k}`); // mean(severity) + c(-1, 0, 1) * sd(severity)
      // The result gives ratio-scale slopes: exp(b_A + at·b_{A:M}); se and p on the log scale.
      expectClose(slopes[k].estimate, Math.exp(expected.estimate), `slope ${k}`);
      expectClose(slopes[k].lower, Math.exp(expected.lower), `slope ${k} lower`);
      expectClose(slopes[k].upper, Math.exp(expected.upper), `slope ${k} upper`);
      expectClose(slopes[k].se, expected.se, `slope ${k} se`);
      expectClose(slopes[k].p, expected.p, `slope ${k} p`, 1e-7);
    });
    const jn = fixture.johnsonNeyman as NonNullable<RCase['johnsonNeyman']>;
    const bounds = result.johnsonNeyman?.bounds ?? [];
    expect(bounds.length).toBe(jn.bounds.length);
    jn.bounds.forEach((bound, k) => expectClose(bounds[k], bound, `Johnson-Neyman bound ${k}`)); // Bauer-Curran quadratic in R
    expect(result.johnsonNeyman?.significant).toBe(jn.leading > 0 ? 'outside' : 'inside');
    expect(result.additiveNote).not.toBeNull();
    expect(result.interaction.additive).toEqual([]);
    comparePredictions(result, fixture, [0, 1, 2]);
  });
});

describe('test for trend across an ordered modifier against base R', () => {
  it('trend-logistic: Wald and LR of the single intervention × score term; predictions per arm', async () => {
    const { result, fixture } = await run('trend-logistic');
    const trend = result.trend;
    expect(trend?.scores).toEqual([{ level: 'low', score: 1 }, { level: 'mid', score: 2 }, { level: 'high', score: 4 }]);
    // glm(readmitted ~ treated + frailty + I(treated * frailty_score) + age + sex): coef and vcov of the I() term
    compareWald({ ...(trend as NonNullable<typeof trend>), p: trend?.wald.p ?? null }, fixture.trend as RWald, 'trend');
    expectClose(trend?.wald.statistic, ((fixture.trend as RWald).estimate / (fixture.trend as RWald).se) ** 2, 'Wald z²');
    expectClose(trend?.ratio?.estimate, Math.exp((fixture.trend as RWald).estimate), 'ratio of ORs per unit of score');
    // anova(reduced, trend, test = "LRT")
    expectClose(trend?.likelihoodRatio?.statistic, fixture.likelihoodRatio?.statistic as number, 'trend LR');
    expectClose(trend?.likelihoodRatio?.p, fixture.likelihoodRatio?.p as number, 'trend LR p', 1e-7);
    expect(result.interaction.omnibus.df).toBe(2);
    comparePredictions(result, fixture, [0, 1]);
  });

  it('trend-linear: t limits on the trend model\'s residual df, no LR', async () => {
    const { result, fixture } = await run('trend-linear');
    const trend = result.trend as NonNullable<AnalysisResult['trend']>;
    compareWald({ ...trend, p: trend.wald.p }, fixture.trend as RWald, 'trend'); // lm(): coef, vcov, qt(0.975, df.residual)
    expect(trend.likelihoodRatio).toBeNull();
    expect(trend.ratio).toBeNull();
  });

  it('trend-dose-logistic: the trend of a dose\'s slope across ordered levels', async () => {
    const { result, fixture } = await run('trend-dose-logistic');
    const trend = result.trend as NonNullable<AnalysisResult['trend']>;
    expect(trend.term).toBe('minutes × score(frailty)');
    compareWald({ ...trend, p: trend.wald.p }, fixture.trend as RWald, 'trend');
    expectClose(trend.likelihoodRatio?.statistic, fixture.likelihoodRatio?.statistic as number, 'trend LR'); // anova(reduced, trend, test = "LRT")
  });

  it('refuses an ordered modifier with a level that has no score, naming the level', async () => {
    const spec = structuredClone(fixtures['trend-logistic'].spec);
    spec.modifier.ordered = { scores: { low: 1, mid: 2 } };
    await expect(runAnalysis(data, spec, { threads: 1 })).rejects.toThrow(/no score for its level "high"/);
  });

  it('refuses the bootstrap, MOVER and preventive recoding with a continuous intervention', async () => {
    for (const change of [{ ci: { level: 0.95, method: 'bootstrap' as const } }, { ci: { level: 0.95, method: 'mover' as const } }, { preventive: true }]) {
      const spec = { ...structuredClone(fixtures['dose-logistic-categorical'].spec), ...change };
      await expect(runAnalysis(data, spec, { threads: 1 })).rejects.toThrow(/do not apply to a continuous intervention/);
    }
  });
});
