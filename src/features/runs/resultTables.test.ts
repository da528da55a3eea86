import { parse } from 'csv-parse/sync';
import { beforeAll, describe, expect, it } from 'vitest';
import type { Result } from '@/engine/boundary/schemas';
import { CAUTION_VERSION, RESULT_CAUTIONS } from '@/lib/cautions';
import { csvField, csvRecord } from '@/lib/csv';
import { CSV_COLUMNS, resultCsv } from './resultCsv';
import { fixed, formatInterval, formatP, formatRatio, MINUS, type IntervalCell } from './resultFormat';
import { buildResultTables } from './resultTables';
import { multiplicityNote, warningsInWords } from './resultWords';
import { effectRangeInWords, thinStretches } from './continuousWords';
import { unstableIntervals } from './resultReading';
import { CALL_BACK_SPEC, engineResult, UP_AND_ABOUT_SPEC } from './testSupport';

/**
 * Independent formatter for the checks below, written from the stated rules rather than
 * imported: 2 decimals for ratios, "a (b to c)", U+2212 for the minus sign.
 */
function twoDecimals(value: number): string {
  const text = value.toFixed(2);
  return text === '-0.00' ? '0.00' : text.replace('-', '\u2212');
}

function expectInterval(cell: IntervalCell | null | undefined, source: { estimate: number | null; lower: number | null; upper: number | null } | null | undefined) {
  expect(cell).toBeTruthy();
  expect(source).toBeTruthy();
  expect(cell!.estimate).toBe(source!.estimate);
  expect(cell!.lower).toBe(source!.lower);
  expect(cell!.upper).toBe(source!.upper);
  expect(cell!.text).toBe(`${twoDecimals(source!.estimate!)} (${twoDecimals(source!.lower!)} to ${twoDecimals(source!.upper!)})`);
}

describe('number formats', () => {
  it('follows the rules for ratios, p-values, minus signs and intervals', () => {
    expect(formatRatio(1.2349)).toBe('1.23');
    expect(formatRatio(0.0042)).toBe('0.0042');
    expect(formatRatio(null)).toBe('—');
    expect(formatP(0.0004)).toBe('<0.001');
    expect(formatP(0.001)).toBe('0.001');
    expect(formatP(0.04023)).toBe('0.040');
    expect(formatP(1)).toBe('1.000');
    expect(fixed(-0.004, 2)).toBe('0.00');
    expect(fixed(-1.5, 2)).toBe(`${MINUS}1.50`);
    expect(formatInterval(1.23, 0.98, 1.54, 'ratio')).toBe('1.23 (0.98 to 1.54)');
    expect(formatInterval(-0.05, -0.12, 0.02, 'difference')).toBe(`${MINUS}0.05 (${MINUS}0.12 to 0.02)`);
    expect(formatInterval(1.5, null, null, 'ratio')).toBe('1.50 (—)');
  });
});

describe('tables of a categorical modifier (Call-back, logistic, real engine result)', () => {
  let result: Result;
  beforeAll(async () => {
    result = await engineResult('call-back', CALL_BACK_SPEC);
  });

  it('lays out every intervention × modifier cell against one reference, with counts from the result', () => {
    const tables = buildResultTables(result, CALL_BACK_SPEC);
    expect(tables.joint).not.toBeNull();
    const joint = tables.joint!;
    expect(joint.rows.map((row) => row.level)).toEqual(['18-44', '45-64', '65-79', '80+']);
    expect(joint.exposureLevels).toEqual(['0', '1']);
    expect(joint.referenceLabel).toBe('call_back = 0, age_band = 18-44');
    let cellsSeen = 0;
    for (const row of joint.rows) {
      for (const cell of row.cells) {
        const source = result.joint!.cells.find((entry) => entry.modifier === row.level && entry.exposure === cell.exposure)!;
        expect(cell.n.value).toBe(source.n);
        expect(cell.n.text).toBe(source.n.toLocaleString('en-GB'));
        expect(cell.events?.value).toBe(source.events);
        expect(cell.outcome.value).toBe(source.risk);
        expect(cell.outcome.text).toBe(`${(source.risk! * 100).toFixed(1)} %`);
        if (source.effect === null) expect(cell.effect).toBeNull();
        else expectInterval(cell.effect, source.effect);
        cellsSeen++;
      }
    }
    // 4 age bands × 2 arms.
    expect(cellsSeen).toBe(8);
    // The counts add up to the analysed rows.
    expect(joint.rows.flatMap((row) => row.cells).reduce((sum, cell) => sum + (cell.n.value ?? 0), 0)).toBe(result.n);
  });

  it('shows the intervention effect within each level with raw and adjusted p-values', () => {
    const tables = buildResultTables(result, CALL_BACK_SPEC);
    for (const row of tables.joint!.rows) {
      const stratum = result.strata.find((entry) => entry.level === row.level)!;
      expectInterval(row.within.effect, stratum.effect);
      expect(row.within.effect.testId).toBe(`stratum-effect-${row.level}`);
      expect(row.within.p.value).toBe(stratum.effect.p);
      expect(row.within.pHolm.value).toBe(stratum.pAdjusted.holm);
      expect(row.within.p.text).toBe(stratum.effect.p! < 0.001 ? '<0.001' : stratum.effect.p!.toFixed(3));
    }
  });

  it('gives RERI, AP, AP*, S and the ratio of odds ratios per non-reference level', () => {
    const tables = buildResultTables(result, CALL_BACK_SPEC);
    expect(tables.interaction.map((row) => row.level)).toEqual(['45-64', '65-79', '80+']);
    for (const row of tables.interaction) {
      const additive = result.interaction.additive.find((entry) => entry.level === row.level)!;
      const multiplicative = result.interaction.multiplicative.find((entry) => entry.level === row.level)!;
      expectInterval(row.reri, additive.reri);
      expectInterval(row.ap, additive.ap);
      expectInterval(row.apStar, additive.apStar);
      if (additive.s) expectInterval(row.s, additive.s);
      else expect(row.s).toBeNull();
      expectInterval(row.multiplicative, multiplicative);
      expect(row.multiplicative!.p.value).toBe(multiplicative.p);
      expect(row.reri!.testId).toBe(`reri-${row.level}`);
      expect(row.additiveMethod).toBe('delta method');
    }
  });

  it('shows the pooled risk difference under both published variances, each labelled', () => {
    const mh = result.stratifiedTables!.mantelHaenszel;
    const [sato, greenlandRobins] = mh.riskDifferenceVariances!;
    const rd = buildResultTables({ ...result, effectMeasure: 'RD' }, CALL_BACK_SPEC).crudeCheck!.pooled!;
    expect(rd.label).toContain('limits from the Sato (1989) variance');
    expect([rd.cell.estimate, rd.cell.lower, rd.cell.upper]).toEqual([mh.riskDifference!.estimate, sato.lower, sato.upper]);
    expect(rd.alternative!.label).toBe('With the Greenland-Robins (1985) variance');
    expect([rd.alternative!.cell.estimate, rd.alternative!.cell.lower, rd.alternative!.cell.upper]).toEqual([mh.riskDifference!.estimate, greenlandRobins.lower, greenlandRobins.upper]);
    const records = parse(resultCsv(result, CALL_BACK_SPEC)) as string[][];
    const header = records.find((record) => record[0] === 'section')!;
    const labels = records.map((record) => record[header.indexOf('measure')]).filter((label) => label?.startsWith('Mantel-Haenszel RD'));
    expect(labels).toEqual(['Mantel-Haenszel RD (crude), Sato (1989) variance', 'Mantel-Haenszel RD (crude), Greenland-Robins (1985) variance']);
  });

  it('says how many rows were left out and in which columns, on the page and in the CSV', () => {
    // The counts are set here (the demo cohort has no missing value); only their wording is checked.
    const withMissing: Result = { ...result, dropped: 12, missingByColumn: [{ column: 'sex', rows: 5 }, { column: 'site', rows: 9 }] };
    expect(buildResultTables(withMissing, CALL_BACK_SPEC).modelLine).toContain('12 left out for missing values (missing in sex 5, site 9)');
    const records = parse(resultCsv(withMissing, CALL_BACK_SPEC), { relax_column_count: true }) as string[][];
    const rows = records.filter((record) => record[0] === 'rows').map((record) => [record[1], record[3], record[10]]);
    expect(rows).toEqual([
      ['', 'analysed', String(result.n)],
      ['', 'left out for missing values', '12'],
      ['sex', 'missing in this column', '5'],
      ['site', 'missing in this column', '9'],
    ]);
  });

  it('reports the omnibus test, the pooled estimate, the covariates and the model', () => {
    const tables = buildResultTables(result, CALL_BACK_SPEC);
    const omnibus = result.interaction.omnibus;
    expect(tables.omnibus.label).toBe('Likelihood-ratio test of all product terms');
    expect(tables.omnibus.p.value).toBe(omnibus.p);
    expect(tables.omnibus.p.testId).toBe('omnibus-p');
    expect(tables.omnibus.statistic.text).toBe(`χ² = ${twoDecimals(omnibus.statistic!)}`);
    // Three product terms for four age bands.
    expect(tables.omnibus.df).toBe('3 df');
    expectInterval(tables.crudeCheck?.pooled?.cell, result.stratifiedTables!.mantelHaenszel.oddsRatio);
    expect(tables.crudeCheck?.pooled?.alternative).toBeNull();
    expect(tables.covariates.map((covariate) => covariate.text)).toEqual(['sex (reference F)', 'comorbidity_score', 'prior_admissions', 'site (reference Tern Valley General)']);
    expect(tables.modelLine).toContain(`${result.n.toLocaleString('en-GB')} rows analysed`);
    expect(tables.modifierWithinArms.flatMap((row) => row.cells)).toHaveLength(result.modifierEffects.length);
    for (const row of tables.modifierWithinArms) {
      for (const cell of row.cells) {
        expectInterval(cell.effect, result.modifierEffects.find((entry) => entry.level === row.level && entry.exposure === cell.exposure)!.effect);
      }
    }
  });

  it('says how many strata were examined and which adjustment is primary', () => {
    expect(buildResultTables(result, CALL_BACK_SPEC).multiplicityNote).toBe(
      "The intervention's effect was estimated in 4 strata of age_band, so 4 within-stratum tests were made. The primary p-values use the Holm adjustment across the 4 strata, " +
        'which keeps the chance of any false alarm across them at or below 5 %. Judge effect modification by the interaction tests, not by which strata reach significance.',
    );
    // 1 − 0.95⁴ = 1 − 0.8145 = 0.1855 → 19 %.
    expect(multiplicityNote({ ...result, multiplicity: 'none' })).toContain('can reach 19 %');
  });

  it('carries the engine warnings in words', () => {
    const tables = buildResultTables(result, CALL_BACK_SPEC);
    // One entry per engine warning code, in the engine's order; a code given once keeps the engine's message.
    expect(tables.warnings.map((warning) => warning.code)).toEqual([...new Set(result.warnings.map((warning) => warning.code))]);
    for (const warning of tables.warnings) {
      const given = result.warnings.filter((entry) => entry.code === warning.code);
      if (given.length === 1) expect(warning.message).toBe(given[0].message);
    }
    const preventive = tables.warnings.filter((warning) => warning.code === 'PREVENTIVE_EXPOSURE');
    expect(preventive.length).toBeLessThanOrEqual(1);
    // 1,709 events in 12,000 rows is 14 %, above the engine's 10 % threshold for a common outcome.
    expect(tables.warnings.some((warning) => warning.code === 'COMMON_OUTCOME_OR_RERI')).toBe(true);
  });

  it('writes a CSV with the caution first, equal-width records and the unrounded numbers', () => {
    const csv = resultCsv(result, CALL_BACK_SPEC);
    const records = parse(csv, { relax_column_count: false }) as string[][];
    expect(records.slice(0, RESULT_CAUTIONS.length).map((record) => [record[0], record[1]])).toEqual(RESULT_CAUTIONS.map((text) => ['Caution', text]));
    expect(records[RESULT_CAUTIONS.length].slice(0, 2)).toEqual(['Caution version', CAUTION_VERSION]);
    const headerIndex = records.findIndex((record) => record[0] === 'section');
    expect(records[headerIndex]).toEqual([...CSV_COLUMNS]);
    const rows = records.slice(headerIndex + 1).map((record) => Object.fromEntries(CSV_COLUMNS.map((name, i) => [name, record[i]])));
    for (const stratum of result.strata) {
      const row = rows.find((entry) => entry.section === 'within-stratum' && entry.level === stratum.level)!;
      expect(Number(row.estimate)).toBe(stratum.effect.estimate);
      expect(Number(row.lower)).toBe(stratum.effect.lower);
      expect(Number(row.p_holm)).toBe(stratum.pAdjusted.holm);
      expect(Number(row.n)).toBe(stratum.n);
    }
    const reri = rows.filter((entry) => entry.section === 'additive' && entry.measure === 'RERI');
    expect(reri.map((entry) => Number(entry.estimate))).toEqual(
      ['45-64', '65-79', '80+'].map((level) => result.interaction.additive.find((entry) => entry.level === level)!.reri!.estimate),
    );
    // A negative number we computed stays a plain number, not a neutralised text.
    const negative = rows.find((entry) => entry.section === 'additive' && entry.estimate.startsWith('-'));
    expect(negative).toBeDefined();
    expect(Number.isFinite(Number(negative!.estimate))).toBe(true);
    expect(rows.find((entry) => entry.section === 'omnibus')!.p).toBe(String(result.interaction.omnibus.p));
    expect(csv.endsWith('\r\n')).toBe(true);
  });
});

describe('preventive recoding', () => {
  it('names the recoded reference cell that the engine used for the additive measures', async () => {
    const spec = { ...CALL_BACK_SPEC, preventive: true };
    const result = await engineResult('call-back', spec);
    const tables = buildResultTables(result, spec);
    const recoded = result.interaction.additive.filter((entry) => entry.reference.exposure !== '0' || entry.reference.modifier !== '18-44');
    // The call lowers risk, so at least one level is recoded to a lower-risk reference.
    expect(recoded.length).toBeGreaterThan(0);
    for (const entry of recoded) {
      const row = tables.interaction.find((view) => view.level === entry.level)!;
      expect(row.recodedReference).toBe(`call_back = ${entry.reference.exposure}, age_band = ${entry.reference.modifier}`);
    }
  });
});

describe('tables of a continuous modifier (Up-and-about, linear, real engine result)', () => {
  let result: Result;
  beforeAll(async () => {
    result = await engineResult('up-and-about', UP_AND_ABOUT_SPEC);
  });

  it('lists the simple slopes and the difference in differences from the result', () => {
    const tables = buildResultTables(result, UP_AND_ABOUT_SPEC);
    expect(tables.joint).toBeNull();
    expect(tables.measure.code).toBe('MD');
    const slopes = result.slopes!;
    expect(tables.continuous!.slopes).toHaveLength(slopes.length);
    tables.continuous!.slopes.forEach((row, index) => {
      expectInterval(row.effect, slopes[index]);
      expect(row.at.value).toBe(slopes[index].at);
      expect(row.label).toBe(slopes[index].label);
    });
    const did = result.interaction.additive[0].differenceInDifferences!;
    expectInterval(tables.interaction[0].differenceInDifferences, did);
    expect(tables.interaction[0].reri).toBeNull();
    expect(tables.omnibus.df).toBe(`1 and ${result.interaction.omnibus.df2!.toLocaleString('en-GB')} df`);
  });

  it('says where the effect is distinguishable from none and where the data are thin', () => {
    const tables = buildResultTables(result, UP_AND_ABOUT_SPEC);
    const jn = result.johnsonNeyman!;
    expect(tables.continuous!.johnsonNeyman).toBe(effectRangeInWords(jn, { modifier: 'frailty_score', alpha: result.alpha, spread: result.spread }).sentence);
    // The synthetic truth is an effect of 0.15 − 0.35·frailty days, far from zero on all of 1 to 9,
    // so the boundaries (if any) lie outside the observed range.
    expect(tables.continuous!.johnsonNeyman).toMatch(/^The intervention's effect is distinguishable from no effect at the 5 % level across the whole observed range of frailty_score \(1\.0 to 9\.0\)/);
    expect(tables.continuous!.middle!.map((cell) => cell.value)).toEqual([result.spread!.p5, result.spread!.p95]);
    // The demo analysis marks the frailty scores clinicians name.
    expect(tables.continuous!.slopes.map((row) => [row.label, row.at.value])).toEqual([['mild', 3], ['moderate', 5], ['severe', 7]]);
    tables.continuous!.slopes.forEach((row, index) => {
      const slope = result.slopes![index];
      expect(row.clear).toBe(slope.upper! < 0 || slope.lower! > 0);
    });
  });

  it('gives a ratio model with a continuous modifier both a per-unit ratio and additive measures at +1 SD', async () => {
    const spec = {
      ...CALL_BACK_SPEC,
      modifier: { column: 'comorbidity_score', type: 'continuous' as const },
      covariates: CALL_BACK_SPEC.covariates.filter((covariate) => covariate.column !== 'comorbidity_score'),
    };
    const continuous = await engineResult('call-back', spec);
    const tables = buildResultTables(continuous, spec);
    const perUnit = tables.interaction.find((row) => row.level === 'per 1 unit of comorbidity_score')!;
    expectInterval(perUnit.multiplicative, continuous.interaction.multiplicative[0]);
    const plusSd = tables.interaction.find((row) => row.level === '+1 SD of comorbidity_score')!;
    expectInterval(plusSd.reri, continuous.interaction.additive[0].reri);
  });
});

describe('where the effect is distinguishable from none, in words', () => {
  const base = { observed: [1, 9] as [number, number], criticalValue: 1.96 };
  const say = (jn: Omit<NonNullable<Result['johnsonNeyman']>, 'observed' | 'criticalValue'>, spread?: Result['spread']) =>
    effectRangeInWords({ ...base, ...jn }, { modifier: 'frailty_score', alpha: 0.05, spread });

  it('outside two boundaries within the range: below the first or above the second, with a word on each boundary', () => {
    const words = say({ bounds: [3.25, 6.5], significant: 'outside', boundsInRange: [true, true] });
    expect(words.sentence).toBe(
      "The intervention's effect is distinguishable from no effect at the 5 % level where frailty_score is below 3.3 or above 6.5, and cannot be told apart from none between 3.3 and 6.5 (observed 1.0 to 9.0).",
    );
    expect(words.boundaries.map((boundary) => boundary.text)).toEqual([
      'The lower Johnson-Neyman boundary, 3.3, lies within the observed range: there the interval of the effect just reaches no effect.',
      'The upper Johnson-Neyman boundary, 6.5, lies within the observed range: there the interval of the effect just reaches no effect.',
    ]);
  });

  it('outside, with only the lower boundary in range: below it, and the upper one said to lie beyond the data', () => {
    const words = say({ bounds: [4.2, 12], significant: 'outside', boundsInRange: [true, false] });
    expect(words.sentence).toBe(
      "The intervention's effect is distinguishable from no effect at the 5 % level where frailty_score is below 4.2, and cannot be told apart from none above 4.2 (observed 1.0 to 9.0).",
    );
    expect(words.boundaries[1].text).toBe(
      'The upper Johnson-Neyman boundary, 12.0, lies above the largest observed frailty_score (9.0): no one in these data is there, so it marks nothing about them.',
    );
  });

  it('outside, with both boundaries below the range: everywhere observed, and both boundaries named', () => {
    const words = say({ bounds: [-0.41, 0.59], significant: 'outside', boundsInRange: [false, false] });
    expect(words.sentence).toBe("The intervention's effect is distinguishable from no effect at the 5 % level across the whole observed range of frailty_score (1.0 to 9.0).");
    expect(words.boundaries.map((boundary) => boundary.inRange)).toEqual([false, false]);
    expect(words.boundaries[0].text).toMatch(/^The lower Johnson-Neyman boundary, −0\.4, lies below the smallest observed frailty_score \(1\.0\)/);
  });

  it('outside, with the range between the boundaries: nowhere observed', () => {
    expect(say({ bounds: [0, 10], significant: 'outside', boundsInRange: [false, false] }).sentence).toBe(
      "The intervention's effect cannot be told apart from no effect at the 5 % level anywhere in the observed range of frailty_score (1.0 to 9.0).",
    );
  });

  it('inside two boundaries: between them', () => {
    expect(say({ bounds: [2, 5.5], significant: 'inside', boundsInRange: [true, true] }).sentence).toBe(
      "The intervention's effect is distinguishable from no effect at the 5 % level where frailty_score is between 2.0 and 5.5, and cannot be told apart from none below 2.0 or above 5.5 (observed 1.0 to 9.0).",
    );
  });

  it('one boundary: above it for "outside", below it for "inside"', () => {
    expect(say({ bounds: [4.2], significant: 'outside', boundsInRange: [true] }).sentence).toMatch(/where frailty_score is above 4\.2, and cannot be told apart from none below 4\.2/);
    expect(say({ bounds: [4.2], significant: 'inside', boundsInRange: [true] }).sentence).toMatch(/where frailty_score is below 4\.2, and cannot be told apart from none above 4\.2/);
    expect(say({ bounds: [4.2], significant: 'inside', boundsInRange: [true] }).boundaries[0].text).toMatch(/^The Johnson-Neyman boundary, 4\.2,/);
  });

  it('everywhere and nowhere, without boundaries', () => {
    expect(say({ bounds: null, significant: 'everywhere', boundsInRange: [] }).boundaries).toEqual([]);
    expect(say({ bounds: null, significant: 'nowhere', boundsInRange: [] }).sentence).toMatch(/cannot be told apart from no effect at the 5 % level anywhere/);
  });

  it('says where the data are thin: outside the 5th to 95th percentiles, and in a sparse tenth of the range', () => {
    // Counts set here by hand: 100 rows, the tenth from 5.8 to 6.6 holding 1 (under 2 %).
    const bins = [8, 12, 14, 16, 15, 14, 1, 10, 6, 4].map((n, k) => ({ from: 1 + 0.8 * k, to: 1 + 0.8 * (k + 1), n }));
    const spread = { p5: 1.5, p95: 8.2, bins };
    const stretches = thinStretches(spread, [1, 9]);
    expect(stretches).toHaveLength(3);
    [[1, 1.5], [5.8, 6.6], [8.2, 9]].forEach(([from, to], index) => {
      expect(stretches[index][0]).toBeCloseTo(from, 12);
      expect(stretches[index][1]).toBeCloseTo(to, 12);
    });
    const words = say({ bounds: [6.2, 20], significant: 'outside', boundsInRange: [true, false] }, spread);
    expect(words.sentence).toMatch(/; the data are thin below 1\.5, between 5\.8 and 6\.6 and above 8\.2, so read the effect there with care\.$/);
    expect(words.boundaries[0].text).toContain('in a stretch where the data are thin');
  });
});

describe('reading aids', () => {
  it('says a per-level warning once', () => {
    const warnings = warningsInWords({
      warnings: [
        { code: 'PREVENTIVE_EXPOSURE', message: 'For 65-79, …', level: '65-79' },
        { code: 'PREVENTIVE_EXPOSURE', message: 'For 80+, …', level: '80+' },
        { code: 'SPARSE_STRATUM', message: 'Few events in 80+.' },
      ],
    });
    expect(warnings.map((warning) => warning.code)).toEqual(['PREVENTIVE_EXPOSURE', 'SPARSE_STRATUM']);
    expect(warnings[0].message).toMatch(/^In 65-79 and 80\+, a combination has a lower risk than the reference: the intervention lowers risk there\./);
  });
});

describe('the crude cross-check and unstable intervals (Call-back, real engine result)', () => {
  let result: Result;
  beforeAll(async () => {
    result = await engineResult('call-back', CALL_BACK_SPEC);
  });

  it('sets the crude homogeneity test beside the adjusted test, in a sentence, with the 2 × 2 tables', () => {
    const check = buildResultTables(result, CALL_BACK_SPEC).crudeCheck!;
    const crudeP = result.stratifiedTables!.homogeneity.breslowDayTarone!.p!;
    const adjustedP = result.interaction.omnibus.p!;
    expect(check.crudeTest!.p.value).toBe(crudeP);
    expect(check.crudeTest!.name).toBe("Crude tables, no covariates (Breslow-Day, Tarone's correction)");
    expect(check.adjustedTest.p.value).toBe(adjustedP);
    const agree = (crudeP < 0.05) === (adjustedP < 0.05);
    expect(check.comparison).toMatch(agree ? /^The crude tables agree with the adjusted model/ : /^The (adjusted model finds|crude tables suggest)/);
    expect(check.comparison).toContain('Pooled over the levels without covariates, the odds ratio is');
    expect(check.tables.map((row) => row.level)).toEqual(['18-44', '45-64', '65-79', '80+']);
    for (const row of check.tables) {
      const stratum = result.stratifiedTables!.strata.find((entry) => entry.level === row.level)!;
      expect([row.exposedEvents.value, row.exposedOthers.value, row.controlEvents.value, row.controlOthers.value]).toEqual([stratum.a, stratum.b, stratum.c, stratum.d]);
      expectInterval(row.crude, stratum.oddsRatio);
    }
  });

  it('flags a ratio interval whose upper limit is ten or more times its lower, in words', () => {
    const tables = buildResultTables(result, CALL_BACK_SPEC);
    // An S interval of 0.03 to 54.67 set by hand on the real tables.
    const wide = { ...tables, interaction: tables.interaction.map((row, index) => (index === 0 ? { ...row, s: { text: '', estimate: 1.2, lower: 0.03, upper: 54.67, testId: 's-x' } } : row)) };
    const flagged = unstableIntervals(wide);
    expect(flagged.find((entry) => entry.testId === 's-x')?.text).toBe(`The synergy index S for ${tables.interaction[0].level}: 0.03 to 54.67, an upper limit 1,822 times the lower.`);
    // The real result's own intervals: flagged exactly when upper / lower ≥ 10.
    const real = unstableIntervals(tables).map((entry) => entry.testId);
    for (const row of tables.interaction) {
      if (row.s && row.s.lower !== null && row.s.upper !== null && row.s.lower > 0) expect(real.includes(row.s.testId!)).toBe(row.s.upper / row.s.lower >= 10);
    }
  });
});

describe('CSV fields (RFC 4180 and OWASP CSV Injection)', () => {
  it('neutralises text that a spreadsheet would run as a formula', () => {
    expect(csvField('=SUM(A1:A9)')).toBe("'=SUM(A1:A9)");
    expect(csvField('+cmd')).toBe("'+cmd");
    expect(csvField('-2+3')).toBe("'-2+3");
    expect(csvField('@SUM(1)')).toBe("'@SUM(1)");
    expect(csvField('\tcalc')).toBe("'\tcalc");
    // CR and LF also force quoting.
    expect(csvField('\rcalc')).toBe('"\'\rcalc"');
    expect(csvField('\ncalc')).toBe('"\'\ncalc"');
  });

  it('quotes commas, quotes and line breaks', () => {
    expect(csvField('Tern Valley, General')).toBe('"Tern Valley, General"');
    expect(csvField('the "call"')).toBe('"the ""call"""');
    expect(csvField('two\nlines')).toBe('"two\nlines"');
    expect(csvField('=1,"2"')).toBe('"\'=1,""2"""');
    expect(csvField('plain')).toBe('plain');
  });

  it('keeps computed numbers, negative ones included, as plain numbers and neutralises numeric-looking text', () => {
    expect(csvField(-0.3118758157005014)).toBe('-0.3118758157005014');
    expect(csvField(1e-7)).toBe('1e-7');
    expect(csvField(Number.NaN)).toBe('');
    expect(csvField(Number.POSITIVE_INFINITY)).toBe('');
    expect(csvField(null)).toBe('');
    expect(csvField('-1')).toBe("'-1");
  });

  it('round-trips through an RFC 4180 reader', () => {
    const fields = ['=HYPERLINK("x")', 'a,b', 'line\r\nbreak', -2.5, null, '@x'];
    const [record] = parse(csvRecord(fields)) as string[][];
    expect(record).toEqual(["'=HYPERLINK(\"x\")", 'a,b', 'line\r\nbreak', '-2.5', '', "'@x"]);
  });
});
