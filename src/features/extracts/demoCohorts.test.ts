import { describe, expect, it } from 'vitest';
import { Matrix, inverse } from 'ml-matrix';
import {
  CALL_BACK_TRUTH,
  callBackReadmissionRisk,
  earlyMobilityEffectAt,
  generateCallBackCohort,
  generateDemoCohorts,
  generateUpAndAboutCohort,
  UP_AND_ABOUT_TRUTH,
} from './demoCohorts';
import { ingestExtract } from './extracts';
import type { ColumnData } from './columnAccumulator';
import { chunked } from './testSupport';

/** Row values of a column as numbers (numeric) or strings (text). */
function valuesOf(column: ColumnData): (number | string | null)[] {
  if (column.kind === 'numeric') return [...column.values];
  return [...column.codes].map((code) => (code < 0 ? null : column.levels[code]));
}

async function table(csv: string): Promise<Record<string, (number | string | null)[]>> {
  const result = await ingestExtract(chunked(csv, 65536));
  return Object.fromEntries(result.columns.map((c) => [c.name, valuesOf(c)]));
}

/**
 * Ordinary least squares with heteroscedasticity-consistent (HC0) standard errors
 * (White, Econometrica 1980;48:817-838): beta = (X'X)^-1 X'y, V = (X'X)^-1 X' diag(e^2) X (X'X)^-1.
 */
function ols(rows: number[][], y: number[]): { beta: number[]; covariance: Matrix } {
  const X = new Matrix(rows);
  const Y = Matrix.columnVector(y);
  const bread = inverse(X.transpose().mmul(X));
  const beta = bread.mmul(X.transpose()).mmul(Y);
  const residuals = Y.sub(X.mmul(beta));
  const meat = new Matrix(X.columns, X.columns);
  for (let i = 0; i < X.rows; i++) {
    const e2 = residuals.get(i, 0) ** 2;
    for (let a = 0; a < X.columns; a++) {
      for (let b = 0; b < X.columns; b++) meat.set(a, b, meat.get(a, b) + X.get(i, a) * X.get(i, b) * e2);
    }
  }
  return { beta: beta.to1DArray(), covariance: bread.mmul(meat).mmul(bread) };
}

describe('demo cohorts', () => {
  it('pass the identifier screen of every regime and have the documented columns and types', async () => {
    const [callBack, upAndAbout] = generateDemoCohorts();
    // The demo runs in the UK regime (the default); the files pass the others too.
    for (const regime of ['uk', 'us-hipaa', 'generic'] as const) {
      for (const cohort of [callBack, upAndAbout]) {
        expect((await ingestExtract(chunked(cohort.csv, 65536), { screen: { regime } })).findings).toEqual([]);
      }
    }
    const first = await ingestExtract(chunked(callBack.csv, 65536), { screen: { regime: 'uk' } });
    expect(first.findings).toEqual([]);
    expect(first.read.recordCount).toBe(12_000);
    expect(first.profile.map((p) => [p.name, p.inferredType])).toEqual([
      ['readmitted_30d', 'binary'],
      ['call_back', 'binary'],
      ['age_band', 'categorical'],
      ['sex', 'binary'],
      ['comorbidity_score', 'count'],
      ['prior_admissions', 'count'],
      ['site', 'categorical'],
    ]);
    expect(first.profile[2].levels?.map((l) => l.value)).toEqual(['18-44', '45-64', '65-79', '80+']);
    expect(first.profile[6].levels?.map((l) => l.value)).toEqual(['Eastholm Community', 'Ridgemoor Infirmary', 'Tern Valley General']);

    const second = await ingestExtract(chunked(upAndAbout.csv, 65536), { screen: { regime: 'uk' } });
    expect(second.findings).toEqual([]);
    expect(second.read.recordCount).toBe(3_000);
    expect(second.profile.map((p) => [p.name, p.inferredType])).toEqual([
      ['length_of_stay_days', 'continuous'],
      ['early_mobility', 'binary'],
      ['frailty_score', 'continuous'],
      ['age_band', 'categorical'],
      ['sex', 'binary'],
      ['admission_type', 'binary'],
      ['comorbidity_score', 'count'],
      ['site', 'categorical'],
    ]);
    const frailty = second.profile[2].numeric;
    expect(frailty?.min).toBeGreaterThanOrEqual(1);
    expect(frailty?.max).toBeLessThanOrEqual(9);
    expect(second.profile[0].numeric?.min).toBeGreaterThan(0);
    for (const cohort of [callBack, upAndAbout]) {
      expect(cohort.description).toMatch(/^Synthetic demo data/);
      expect(cohort.fileName).toMatch(/synthetic\.csv$/);
    }
  });

  it('is reproducible from its seed', () => {
    expect(generateCallBackCohort({ rows: 500 }).csv).toBe(generateCallBackCohort({ rows: 500 }).csv);
    expect(generateCallBackCohort({ rows: 500, seed: 1 }).csv).not.toBe(generateCallBackCohort({ rows: 500 }).csv);
    expect(generateUpAndAboutCohort({ rows: 500 }).csv).toBe(generateUpAndAboutCohort({ rows: 500 }).csv);
  });

  it('keeps every true risk inside (0, 1)', () => {
    // Extremes of the model: youngest band with every protective term, oldest with every harmful one.
    const low = callBackReadmissionRisk({ callBack: 1, ageBand: '18-44', sex: 'F', comorbidityScore: 0, priorAdmissions: 0, site: 'Ridgemoor Infirmary' });
    const high = callBackReadmissionRisk({ callBack: 0, ageBand: '80+', sex: 'M', comorbidityScore: 10, priorAdmissions: 6, site: 'Eastholm Community' });
    // 0.06 - 0.01 - 0.01 = 0.04; 0.20 + 0.01 + 0.12 + 0.12 + 0.01 = 0.46.
    expect(low).toBeCloseTo(0.04, 12);
    expect(high).toBeCloseTo(0.46, 12);
  });

  it('Call-back: an adjusted risk-difference model recovers the true effect in each age band', async () => {
    const data = await table(generateCallBackCohort().csv);
    const bands = CALL_BACK_TRUTH.ageBands;
    const rows: number[][] = [];
    const y: number[] = [];
    for (let i = 0; i < data.readmitted_30d.length; i++) {
      const band = bands.indexOf(data.age_band[i] as (typeof bands)[number]);
      const call = data.call_back[i] as number;
      rows.push([
        1,
        ...[1, 2, 3].map((b) => (band === b ? 1 : 0)),
        ...[0, 1, 2, 3].map((b) => (band === b ? call : 0)),
        data.sex[i] === 'M' ? 1 : 0,
        data.comorbidity_score[i] as number,
        data.prior_admissions[i] as number,
        data.site[i] === 'Eastholm Community' ? 1 : 0,
        data.site[i] === 'Ridgemoor Infirmary' ? 1 : 0,
      ]);
      y.push(data.readmitted_30d[i] as number);
    }
    const { beta, covariance } = ols(rows, y);
    bands.forEach((band, b) => {
      const estimate = beta[4 + b];
      const se = Math.sqrt(covariance.get(4 + b, 4 + b));
      expect(Math.abs(estimate - CALL_BACK_TRUTH.riskDifference[band])).toBeLessThan(4 * se);
    });
    // The additive interaction, oldest band against youngest: -0.08, within 4 standard errors.
    const contrast = beta[7] - beta[4];
    const contrastSe = Math.sqrt(covariance.get(7, 7) + covariance.get(4, 4) - 2 * covariance.get(4, 7));
    expect(Math.abs(contrast - CALL_BACK_TRUTH.additiveInteractionOldestVsYoungest)).toBeLessThan(4 * contrastSe);
    expect(contrast).toBeLessThan(0);
  });

  it('Up-and-about: a linear model recovers the early-mobility x frailty interaction', async () => {
    const data = await table(generateUpAndAboutCohort().csv);
    const bands = UP_AND_ABOUT_TRUTH.ageBands;
    const rows: number[][] = [];
    const y: number[] = [];
    for (let i = 0; i < data.length_of_stay_days.length; i++) {
      const mobility = data.early_mobility[i] as number;
      const frailty = data.frailty_score[i] as number;
      const band = bands.indexOf(data.age_band[i] as (typeof bands)[number]);
      rows.push([
        1,
        mobility,
        frailty,
        mobility * frailty,
        band,
        data.sex[i] === 'M' ? 1 : 0,
        data.admission_type[i] === 'emergency' ? 1 : 0,
        data.comorbidity_score[i] as number,
        data.site[i] === 'Eastholm Community' ? 1 : 0,
        data.site[i] === 'Ridgemoor Infirmary' ? 1 : 0,
      ]);
      y.push(data.length_of_stay_days[i] as number);
    }
    const { beta, covariance } = ols(rows, y);
    const se = (k: number): number => Math.sqrt(covariance.get(k, k));
    expect(Math.abs(beta[3] - UP_AND_ABOUT_TRUTH.interactionPerFrailtyPoint)).toBeLessThan(4 * se(3));
    expect(Math.abs(beta[1] - UP_AND_ABOUT_TRUTH.earlyMobilityMainEffect)).toBeLessThan(4 * se(1));
    expect(Math.abs(beta[2] - UP_AND_ABOUT_TRUTH.frailtyPerPoint)).toBeLessThan(4 * se(2));
    // Documented conditional effects: 0.15 - 0.35 f at f = 1, 5, 9.
    expect(earlyMobilityEffectAt(1)).toBeCloseTo(-0.2, 12);
    expect(earlyMobilityEffectAt(5)).toBeCloseTo(-1.6, 12);
    expect(earlyMobilityEffectAt(9)).toBeCloseTo(-3.0, 12);
  });
});
