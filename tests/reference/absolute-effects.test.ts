/**
 * Standardized absolute effects (risks under each arm, RD, NNT, interaction contrast) and
 * E-values against base R, at 1e-8 relative. The expected numbers are written by
 * tests/reference/r/make-absolute-fixtures.R (R 4.2.2) into tests/reference/absolute/:
 * mean(predict(fit, newdata = rows of level m with the intervention set to 0 or 1,
 * type = "response")) for the risks, colMeans(dmu * model.matrix(newdata)) for their
 * gradients, sqrt(t(g) %*% V %*% g) with V = vcov(fit) (or the HC0 sandwich written out for
 * modified Poisson) for every se, and the published E-value formula (VanderWeele and Ding
 * 2017). When Rscript is installed the script is re-run and must reproduce the pins.
 */
import { execFileSync } from 'node:child_process';
import { mkdtempSync, readdirSync, readFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { ResultSchema } from '@/engine/boundary/schemas.js';
import { runAnalysis } from '@/engine/index.js';
import type { AnalysisSpec } from '@/engine/types.js';
import { loadDataset, referenceRoot } from './support/loadFixtures.js';
import { expectClose } from './support/tolerance.js';

interface RWald {
  estimate: number;
  lower: number;
  upper: number;
  se: number;
  p: number;
}
interface RLevel {
  level: string;
  n: number;
  riskUnexposed: RWald;
  riskExposed: RWald;
  riskDifference: RWald;
  interactionContrast: RWald | null;
}
interface REValue {
  level: string;
  prevalence: number;
  conversion: string;
  ratio: number;
  estimate: number;
  limit: number;
}
interface AbsoluteFixture {
  name: string;
  r: string;
  spec: AnalysisSpec;
  standardized: RLevel[];
  eValues: REValue[] | null;
}

const folder = join(referenceRoot, 'absolute');
const names = readdirSync(folder).filter((name) => name.endsWith('.json')).map((name) => name.replace(/\.json$/, '')).sort();
const load = (name: string, root = folder): AbsoluteFixture => JSON.parse(readFileSync(join(root, `${name}.json`), 'utf8')) as AbsoluteFixture;

function expectWald(actual: { estimate: number | null; lower: number | null; upper: number | null; se: number | null; p?: number | null }, expected: RWald, label: string, withP: boolean): void {
  expectClose(actual.estimate, expected.estimate, `${label} estimate`);
  expectClose(actual.se, expected.se, `${label} se`);
  expectClose(actual.lower, expected.lower, `${label} lower`);
  expectClose(actual.upper, expected.upper, `${label} upper`);
  if (withP) expectClose(actual.p, expected.p, `${label} p`, 1e-7);
}

describe('standardized absolute effects and E-values match base R', () => {
  it('has the cases the suite relies on', () => {
    // logistic, modified Poisson, log-binomial and linear fits (make-absolute-fixtures.R).
    expect(names.length).toBeGreaterThanOrEqual(6);
  });

  for (const name of names) {
    it(`${name}: matches R (tests/reference/absolute/${name}.json)`, async () => {
      const fixture = load(name);
      const data = loadDataset(name.split('-')[0]);
      const result = await runAnalysis(data, fixture.spec, { threads: 0 });
      expect(ResultSchema.safeParse(result).success).toBe(true);
      const standardized = result.standardized!;
      expect(standardized.levels.map((level) => level.level).sort()).toEqual(fixture.standardized.map((level) => level.level).sort());
      expect(standardized.reference).toBe(fixture.standardized[0].level);
      for (const expected of fixture.standardized) {
        const entry = standardized.levels.find((level) => level.level === expected.level)!;
        const label = `${name} ${expected.level}`;
        expect(entry.n, `${label} n`).toBe(expected.n);
        // R: mean(predict(fit, newdata, type = "response")) and sqrt(t(g) %*% V %*% g).
        expectWald(entry.riskUnexposed, expected.riskUnexposed, `${label} risk, intervention set to 0`, false);
        expectWald(entry.riskExposed, expected.riskExposed, `${label} risk, intervention set to 1`, false);
        expectWald(entry.riskDifference, expected.riskDifference, `${label} RD`, true);
        if (expected.interactionContrast === null) expect(entry.interactionContrast).toBeNull();
        else expectWald(entry.interactionContrast!, expected.interactionContrast, `${label} IC`, true);
        // NNT from R's RD and its limits (Altman, BMJ 1998;317:1309: 1/|RD|, each end 1/|limit|).
        const rd = expected.riskDifference;
        expectClose(entry.nnt.estimate, 1 / Math.abs(rd.estimate), `${label} NNT`);
        expect(entry.nnt.direction).toBe(rd.estimate < 0 ? 'treat' : 'harm');
        expect(entry.nnt.throughInfinity).toBe(rd.lower <= 0 && rd.upper >= 0);
        expectClose(entry.nnt.lower.value, 1 / Math.abs(rd.lower), `${label} NNT end from the RD lower limit`);
        expectClose(entry.nnt.upper.value, 1 / Math.abs(rd.upper), `${label} NNT end from the RD upper limit`);
        expect(entry.nnt.lower.direction).toBe(rd.lower < 0 ? 'treat' : 'harm');
        expect(entry.nnt.upper.direction).toBe(rd.upper < 0 ? 'treat' : 'harm');
      }
      if (fixture.eValues === null) {
        expect(result.eValues).toBeNull();
        return;
      }
      for (const expected of fixture.eValues) {
        const entry = result.eValues!.entries.find((item) => item.level === expected.level)!;
        const label = `${name} ${expected.level} E-value`;
        const stratum = result.strata.find((item) => item.level === expected.level)!;
        expectClose(stratum.effect.estimate, expected.ratio, `${label}: the stratum ratio exp(b1 + b3)`);
        // R: mean(outcome[modifier == level]) and the published formula on the (square-rooted) ratio.
        expectClose(entry.prevalence, expected.prevalence, `${label} prevalence`);
        expect(entry.conversion, label).toBe(expected.conversion);
        expectClose(entry.estimate, expected.estimate, `${label} of the estimate`);
        expectClose(entry.limit, expected.limit, `${label} of the limit nearer 1`);
      }
    });
  }

  it('covers both odds-ratio conversions and an interval through 1', () => {
    const all = names.flatMap((name) => load(name).eValues ?? []);
    expect(all.some((entry) => entry.conversion === 'square-root')).toBe(true);
    expect(all.some((entry) => entry.conversion === 'rare-outcome')).toBe(true);
    expect(all.some((entry) => entry.limit === 1)).toBe(true);
    expect(all.some((entry) => entry.limit > 1)).toBe(true);
  });
});

function rscriptAvailable(): boolean {
  try {
    execFileSync('Rscript', ['--version'], { stdio: 'ignore' });
    return true;
  } catch {
    return false;
  }
}

/** Same shape and strings; numbers equal to 1e-10 relative (R's BLAS differs in the last digits). */
function expectSameWithin(made: unknown, kept: unknown, where: string): void {
  if (typeof kept === 'number' && typeof made === 'number') {
    const scale = Math.max(Math.abs(kept), 1e-300);
    expect(Math.abs(made - kept) <= 1e-10 * scale || Math.abs(made - kept) <= 1e-14, `${where}: R now gives ${made}, the pin holds ${kept}`).toBe(true);
    return;
  }
  if (Array.isArray(kept)) {
    expect(Array.isArray(made) && made.length, `${where}: length`).toBe(kept.length);
    kept.forEach((item, i) => expectSameWithin((made as unknown[])[i], item, `${where}[${i}]`));
    return;
  }
  if (kept !== null && typeof kept === 'object') {
    expect(made !== null && typeof made === 'object' ? Object.keys(made).sort() : made, `${where}: fields`).toEqual(Object.keys(kept).sort());
    for (const [key, value] of Object.entries(kept)) expectSameWithin((made as Record<string, unknown>)[key], value, `${where}.${key}`);
    return;
  }
  expect(made, where).toBe(kept);
}

describe.skipIf(!rscriptAvailable())('absolute-effect pins are current', () => {
  it('make-absolute-fixtures.R reproduces every committed case', () => {
    const out = mkdtempSync(join(tmpdir(), 'absolute-fixtures-'));
    execFileSync('Rscript', [join(referenceRoot, 'r', 'make-absolute-fixtures.R'), out], { stdio: 'ignore', cwd: join(referenceRoot, '..', '..') });
    expect(readdirSync(join(out, 'absolute')).sort()).toEqual(readdirSync(folder).sort());
    for (const name of names) expectSameWithin(load(name, join(out, 'absolute')), load(name), `absolute/${name}.json`);
  });
});
