/**
 * The subgroup screen against base R, at 1e-8 relative (p-values 1e-7). The expected numbers
 * are written by tests/reference/r/make-screen-fixtures.R (R 4.2.2) into
 * tests/reference/screen/, on the seeded synthetic cohort (invented data):
 * one glm(outcome ~ treated * modifier + covariates, binomial,
 * control = glm.control(epsilon = 1e-14, maxit = 100)) per modifier, refitted until coef()
 * stops changing; the interaction test anova(reduced, full, test = "LRT") for the logistic
 * model and anova(reduced, full) (F) for lm(); stratum effects and slopes from coef() and
 * vcov(); p.adjust(p, method = "holm") and p.adjust(p, method = "BH") across the modifiers.
 * When Rscript is installed the script is re-run and must reproduce the pins.
 */
import { execFileSync } from 'node:child_process';
import { mkdtempSync, readFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { ResultSchema, SpecSchema } from '@/engine/boundary/schemas.js';
import { InvalidSpecError, runAnalysis } from '@/engine/index.js';
import type { AnySpec } from '@/engine/types.js';
import { loadDataset, referenceRoot } from './support/loadFixtures.js';
import { expectClose } from './support/tolerance.js';

interface RWald {
  estimate: number;
  lower: number;
  upper: number;
  se: number;
  p: number;
}
interface REntry {
  column: string;
  n: number;
  interaction: { test: string; statistic: number; df: number; df2: number | null; p: number };
  strata: (RWald & { level: string })[];
  slopes: (RWald & { at: number })[];
  holm: number;
  bh: number;
}
interface RScreen {
  spec: AnySpec;
  modifiers: REntry[];
}

const folder = join(referenceRoot, 'screen');
const names = ['seeded-logistic-screen', 'seeded-linear-screen'];
const load = (name: string, root = folder): RScreen => JSON.parse(readFileSync(join(root, `${name}.json`), 'utf8')) as RScreen;

function compareWald(actual: { estimate: number | null; lower: number | null; upper: number | null; se: number | null; p: number | null }, expected: RWald, label: string): void {
  expectClose(actual.estimate, expected.estimate, `${label} estimate`);
  expectClose(actual.lower, expected.lower, `${label} lower`);
  expectClose(actual.upper, expected.upper, `${label} upper`);
  expectClose(actual.se, expected.se, `${label} se (vcov)`);
  expectClose(actual.p, expected.p, `${label} p`, 1e-7);
}

describe('subgroup screen matches base R', () => {
  for (const name of names) {
    it(`${name}: one model per modifier, interaction tests, Holm and BH (tests/reference/screen/${name}.json)`, async () => {
      const fixture = load(name);
      const spec = SpecSchema.parse(fixture.spec);
      const result = ResultSchema.parse(await runAnalysis(loadDataset('seeded'), spec));
      const screen = result.screen;
      expect(screen).not.toBeNull();
      expect(screen!.examined).toBe(fixture.modifiers.length);
      expect(screen!.modifiers.map((entry) => entry.column)).toEqual(fixture.modifiers.map((entry) => entry.column));
      fixture.modifiers.forEach((expected, index) => {
        const entry = screen!.modifiers[index];
        const where = `${name} ${expected.column}`;
        expect(entry.n, `${where} n (nobs)`).toBe(expected.n);
        // anova(reduced, full, test = "LRT") or anova(reduced, full) for lm.
        expect(entry.interaction.test).toBe(expected.interaction.test);
        expect(entry.interaction.df).toBe(expected.interaction.df);
        expectClose(entry.interaction.statistic, expected.interaction.statistic, `${where} interaction statistic (anova)`);
        expectClose(entry.interaction.p, expected.interaction.p, `${where} interaction p (anova)`, 1e-7);
        if (expected.interaction.df2 !== null) expect(entry.interaction.df2).toBe(expected.interaction.df2);
        // p.adjust(p, method = "holm") and p.adjust(p, method = "BH") across the modifiers.
        expectClose(entry.pAdjusted.holm, expected.holm, `${where} Holm p (p.adjust "holm")`, 1e-7);
        expectClose(entry.pAdjusted.bh, expected.bh, `${where} BH p (p.adjust "BH")`, 1e-7);
        // Stratum effects: b_treated + b_treated:level with sqrt(c' vcov c).
        expect(entry.strata.map((stratum) => stratum.level)).toEqual(expected.strata.map((stratum) => stratum.level));
        expected.strata.forEach((stratum, k) => compareWald(entry.strata[k].effect, stratum, `${where} stratum ${stratum.level}`));
        // Slopes at mean − sd, mean, mean + sd: b_treated + b_product·x.
        expect(entry.slopes).toHaveLength(expected.slopes.length);
        expected.slopes.forEach((slope, k) => {
          expectClose(entry.slopes[k].at, slope.at, `${where} slope ${k} at (mean, sd)`);
          compareWald(entry.slopes[k], slope, `${where} slope ${k}`);
        });
      });
      // The top-level fields are the first modifier's own analysis.
      expect(result.modifier.column).toBe(fixture.modifiers[0].column);
    });
  }

  it('keeps the single-modifier result without a screen', async () => {
    const fixture = load('seeded-linear-screen');
    const { modifiers, ...rest } = fixture.spec;
    const result = await runAnalysis(loadDataset('seeded'), SpecSchema.parse({ ...rest, modifier: modifiers![0] }));
    expect(result.screen).toBeNull();
    expect(result.modifier.column).toBe('frailty');
  });

  it('refuses malformed modifier lists with a clear message', async () => {
    const base = load('seeded-logistic-screen').spec;
    const data = loadDataset('seeded');
    const cases: [AnySpec, RegExp][] = [
      [{ ...base, modifiers: [base.modifiers![0], base.modifiers![0]] }, /listed twice/],
      [{ ...base, modifiers: [base.modifiers![0]] }, /between 2 and 12/],
      [{ ...base, modifiers: [base.modifiers![0], { column: 'treated', type: 'categorical' }] }, /intervention "treated" cannot also be a modifier/],
      [{ ...base, modifiers: [base.modifiers![0], { column: 'readmitted', type: 'categorical' }] }, /outcome "readmitted" cannot also be a modifier/],
      [{ ...base, modifier: base.modifiers![0] }, /not both/],
      [{ ...base, covariates: [{ column: 'age', type: 'continuous' }] }, /both a modifier and a covariate/],
    ];
    for (const [spec, message] of cases) {
      await expect(runAnalysis(data, spec)).rejects.toThrow(InvalidSpecError);
      await expect(runAnalysis(data, spec)).rejects.toThrow(message);
    }
    expect(SpecSchema.safeParse({ ...base, modifier: base.modifiers![0] }).success).toBe(false);
    const { modifiers: _list, ...neither } = base;
    expect(SpecSchema.safeParse(neither).success).toBe(false);
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

describe.skipIf(!rscriptAvailable())('subgroup-screen pins are current', () => {
  it('make-screen-fixtures.R reproduces every committed case', () => {
    const out = mkdtempSync(join(tmpdir(), 'screen-fixtures-'));
    execFileSync('Rscript', [join(referenceRoot, 'r', 'make-screen-fixtures.R'), out], { stdio: 'ignore', cwd: join(referenceRoot, '..', '..') });
    for (const name of names) {
      const made = load(name, join(out, 'screen'));
      const kept = load(name);
      expect(JSON.stringify(made.spec)).toBe(JSON.stringify(kept.spec));
      kept.modifiers.forEach((entry, index) => {
        expectClose(made.modifiers[index].interaction.statistic, entry.interaction.statistic, `${name} ${entry.column} statistic, re-run`, 1e-10);
        expectClose(made.modifiers[index].holm, entry.holm, `${name} ${entry.column} Holm, re-run`, 1e-10);
        expectClose(made.modifiers[index].bh, entry.bh, `${name} ${entry.column} BH, re-run`, 1e-10);
      });
    }
  });
});
