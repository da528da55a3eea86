/**
 * The pinned R fixtures cannot drift: when Rscript is installed (the test command installs
 * Debian's r-base-core where missing), re-run tests/reference/r/make-fixtures.R into a
 * temporary folder and require every CSV and fixture to be reproduced byte for byte.
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

describe.skipIf(!rscriptAvailable())('R fixtures are current', () => {
  it('make-fixtures.R reproduces every committed file', () => {
    const folder = mkdtempSync(join(tmpdir(), 'r-fixtures-'));
    execFileSync('Rscript', [join(referenceRoot, 'r', 'make-fixtures.R'), folder], { stdio: 'ignore' });
    for (const sub of ['data', 'fixtures']) {
      const committed = readdirSync(join(referenceRoot, sub)).sort();
      expect(readdirSync(join(folder, sub)).sort(), sub).toEqual(committed);
      for (const name of committed) {
        expect(readFileSync(join(folder, sub, name), 'utf8'), `${sub}/${name}`).toBe(readFileSync(join(referenceRoot, sub, name), 'utf8'));
      }
    }
  });
});
