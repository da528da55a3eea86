/**
 * The pinned R fixtures cannot drift: when Rscript is installed (the test command installs
 * Debian's r-base-core where missing), re-run tests/reference/r/make-fixtures.R into a
 * temporary folder and require every data CSV to be reproduced byte for byte, and every
 * fixture to be reproduced with the same structure and strings and numbers equal to 1e-10
 * relative. Not bit for bit: R's matrix routines call whichever BLAS the machine has
 * (Debian's reference BLAS or OpenBLAS, chosen by update-alternatives), and the two differ
 * in the last two or three of the 17 printed digits; the engine is compared to these
 * numbers at 1e-6 relative, far above that noise.
 */
import { execFileSync } from 'node:child_process';
import { mkdtempSync, readdirSync, readFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { referenceRoot } from './support/loadFixtures.js';

function rscriptAvailable(): boolean {
  try {
    execFileSync('Rscript', ['--version'], { stdio: 'ignore' });
    return true;
  } catch {
    return false;
  }
}

const RELATIVE = 1e-10;

/** Same shape and strings; numbers equal to RELATIVE (absolute near zero). */
function expectSameWithin(made: unknown, kept: unknown, where: string): void {
  if (typeof kept === 'number' && typeof made === 'number') {
    const scale = Math.max(Math.abs(kept), 1e-300);
    if (Math.abs(made - kept) > RELATIVE * scale && Math.abs(made - kept) > 1e-14) {
      expect.fail(`${where}: R now gives ${made}, the fixture holds ${kept} (relative difference ${(Math.abs(made - kept) / scale).toExponential(2)})`);
    }
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

describe.skipIf(!rscriptAvailable())('R fixtures are current', () => {
  it('make-fixtures.R reproduces every committed file', () => {
    const folder = mkdtempSync(join(tmpdir(), 'r-fixtures-'));
    execFileSync('Rscript', [join(referenceRoot, 'r', 'make-fixtures.R'), folder], { stdio: 'ignore' });
    for (const sub of ['data', 'fixtures']) {
      const committed = readdirSync(join(referenceRoot, sub)).sort();
      expect(readdirSync(join(folder, sub)).sort(), sub).toEqual(committed);
      for (const name of committed) {
        const made = readFileSync(join(folder, sub, name), 'utf8');
        const kept = readFileSync(join(referenceRoot, sub, name), 'utf8');
        if (name.endsWith('.json')) expectSameWithin(JSON.parse(made), JSON.parse(kept), `${sub}/${name}`);
        else expect(made, `${sub}/${name}`).toBe(kept);
      }
    }
  });

  it('make-cluster-rate-weight-fixtures.R reproduces every committed file', () => {
    const folder = mkdtempSync(join(tmpdir(), 'r-fixtures-crw-'));
    const root = join(referenceRoot, 'cluster-rate-weight');
    execFileSync('Rscript', [join(referenceRoot, 'r', 'make-cluster-rate-weight-fixtures.R'), folder], { stdio: 'ignore' });
    for (const sub of ['data', 'fixtures']) {
      const committed = readdirSync(join(root, sub)).sort();
      expect(readdirSync(join(folder, sub)).sort(), sub).toEqual(committed);
      for (const name of committed) {
        const made = readFileSync(join(folder, sub, name), 'utf8');
        const kept = readFileSync(join(root, sub, name), 'utf8');
        if (name.endsWith('.json')) expectSameWithin(JSON.parse(made), JSON.parse(kept), `${sub}/${name}`);
        else expect(made, `${sub}/${name}`).toBe(kept);
      }
    }
  });

  it('make-dose-fixtures.R reproduces the dose, trend and prediction cohort and fixtures', () => {
    const folder = mkdtempSync(join(tmpdir(), 'r-dose-fixtures-'));
    execFileSync('Rscript', [join(referenceRoot, 'r', 'make-dose-fixtures.R'), folder], { stdio: 'ignore' });
    expect(readFileSync(join(folder, 'cohort.csv'), 'utf8'), 'dose/cohort.csv').toBe(readFileSync(join(referenceRoot, 'dose', 'cohort.csv'), 'utf8'));
    const made: unknown = JSON.parse(readFileSync(join(folder, 'fixtures.json'), 'utf8'));
    expectSameWithin(made, JSON.parse(readFileSync(join(referenceRoot, 'dose', 'fixtures.json'), 'utf8')), 'dose/fixtures.json');
  });
});
