/**
 * Reading a CSV file on two threads (twoThreadEngineInput.ts) gives the engine exactly the
 * data of the one-pass reader (engineInput.ts): the same columns, row count, file lines and
 * refusals. The files are invented here for the reader's rules (no patients); the expected
 * values are the one-pass reader's own output on the same file, and a few are written out
 * by hand beside it.
 */
import { mkdtempSync, readFileSync, rmSync, statSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { runAnalysis, type EngineData } from '@/engine';
import type { Spec } from '@/engine/boundary/schemas';
import { joinColumns, readEngineDataOnTwoThreads, readInTwoParts } from './twoThreadEngineInput';
import { readEngineData } from './engineInput';

const folder = mkdtempSync(join(tmpdir(), 'two-thread-input-'));
afterAll(() => rmSync(folder, { recursive: true, force: true }));

function file(name: string, text: string): string {
  const path = join(folder, name);
  writeFileSync(path, text);
  return path;
}

type Roles = Record<string, 'categorical' | 'continuous'>;

/** The data without its line function, and the line of every row. */
function comparable(data: EngineData): { data: Omit<EngineData, 'lineOfRow'>; lines: number[] } {
  const { lineOfRow, ...rest } = data;
  return { data: rest, lines: Array.from({ length: data.rowCount }, (_, row) => lineOfRow!(row)) };
}

async function sameAsOnePass(path: string, roles: Roles): Promise<EngineData> {
  const two = await readInTwoParts(path, statSync(path).size, roles);
  expect(two).not.toBeNull();
  expect(comparable(two!)).toEqual(comparable(await readEngineData(path, roles)));
  return two!;
}

function rows(count: number, make: (row: number) => string): string {
  return Array.from({ length: count }, (_, row) => make(row)).join('\n');
}

const roles: Roles = { outcome: 'categorical', group: 'categorical', dose: 'continuous', site: 'categorical' };

describe('reading a CSV file on two threads', () => {
  it('gives the one-pass data: numbers, levels, missing-value tokens, blank lines, CRLF, a byte-order mark', async () => {
    const tokens = ['NA', '.', 'n/a', 'NULL', '-', '', 'NaN'];
    const body = rows(400, (row) => {
      const dose = row % 11 === 0 ? tokens[row % tokens.length] : (row * 0.37).toFixed(2);
      const group = row % 13 === 0 ? tokens[(row + 3) % tokens.length] : ['low', 'mid', 'high', 'élevé'][row % 4];
      const site = row % 17 === 0 ? '"Ward, east"' : `W${row % 5}`;
      // A blank line after every 50th record, so that lines and rows part.
      return `${row % 2},${group},${dose},${site},x${row % 50 === 7 ? '\r\n' : ''}`;
    });
    const text = `\uFEFFoutcome,group,dose,site,unused\r\n${body.replaceAll('\n', '\r\n')}\r\n`;
    const data = await sameAsOnePass(file('mixed.csv', text), roles);
    expect(data.rowCount).toBe(400); // 400 records written above
  });

  it('takes numbers in one part and text in the other as levels, as the one-pass reader does', async () => {
    // `site` is a number in the first half and text in the second: its levels are "1", "2", "7", "A", "B".
    const body = rows(300, (row) => `${row % 2},g${row % 3},${row},${row < 150 ? [1, 2, 7][row % 3] : ['A', 'B', '07'][row % 3]}`);
    const data = await sameAsOnePass(file('switch.csv', `outcome,group,dose,site\n${body}\n`), roles);
    const site = data.columns.site;
    expect(site.kind === 'categorical' ? site.levels : []).toEqual(['1', '2', '7', 'A', 'B']); // "07" is the number 7
  });

  it('gives the one-pass data when a record ends without a line break and a quoted field spans lines in the second part', async () => {
    const body = rows(200, (row) => `${row % 2},${row === 170 ? '"two\nlines"' : 'g'},${row},s`);
    await sameAsOnePass(file('quoted.csv', `outcome,group,dose,site\n${body}`), roles);
  });

  it('reads the file in one pass when the cut falls inside a quoted field, with the same data', async () => {
    const long = `"${'x\n'.repeat(400)}"`;
    const path = file('spanning.csv', `outcome,group,dose,site\n0,a,1,s\n1,${long},2,s\n0,b,3,s\n`);
    expect(await readInTwoParts(path, statSync(path).size, roles)).toBeNull();
    const { lineOfRow, ...two } = await readEngineDataOnTwoThreads(path, roles, 0);
    const { lineOfRow: oneLine, ...one } = await readEngineData(path, roles);
    expect(two).toEqual(one);
    expect(lineOfRow!(2)).toBe(404); // line 3 opens the quoted field of 401 lines; the next record is on line 404
    expect(oneLine!(2)).toBe(404);
  });

  it('refuses a ragged row in the second part with the one-pass message and line', async () => {
    const body = rows(200, (row) => (row === 150 ? '1,g,2' : `${row % 2},g,${row},s`));
    const path = file('ragged.csv', `outcome,group,dose,site\n${body}\n`);
    await expect(readEngineData(path, roles)).rejects.toThrow(/^Line 152: this row has 3 fields but the header has 4/);
    await expect(readEngineDataOnTwoThreads(path, roles, 0)).rejects.toThrow(/^Line 152: this row has 3 fields but the header has 4/);
  });

  it('refuses a column whose levels pass the cap only when both parts are counted', async () => {
    // 30,000 distinct levels in each half, 60,000 in all: over the cap of 50,000 (columnAccumulator.ts).
    const body = rows(60_000, (row) => `${row % 2},g,${row},L${row}`);
    const path = file('levels.csv', `outcome,group,dose,site\n${body}\n`);
    const message = /^The column "site" has more distinct values than a column may keep/;
    await expect(readEngineData(path, roles)).rejects.toThrow(message);
    await expect(readEngineDataOnTwoThreads(path, roles, 0)).rejects.toThrow(message);
  });

  it('then fits on the helper thread that read the second part, with the bits of a fit on one thread', async () => {
    // A seeded linear congruential generator (Park and Miller's constants) invents the rows.
    let state = 12345;
    const next = () => (state = (state * 16807) % 2147483647) / 2147483647;
    const body = rows(3000, () => {
      const exposure = next() < 0.5 ? 1 : 0;
      const group = ['a', 'b', 'c'][Math.floor(next() * 3)];
      const dose = Math.round(next() * 100) / 10;
      const outcome = next() < 0.2 + 0.1 * exposure + 0.02 * dose ? 1 : 0;
      return `${outcome},${exposure},${group},${dose}`;
    });
    const path = file('fit.csv', `outcome,exposure,group,dose\n${body}\n`);
    const fitRoles: Roles = { outcome: 'categorical', exposure: 'categorical', group: 'categorical', dose: 'continuous' };
    const data = await sameAsOnePass(path, fitRoles);
    const spec: Spec = {
      outcome: { column: 'outcome', type: 'binary' },
      exposure: { column: 'exposure', reference: '0' },
      modifier: { column: 'group', type: 'categorical', reference: 'a' },
      covariates: [{ column: 'dose', type: 'continuous' }],
      model: 'logistic',
      ci: { level: 0.95, method: 'delta' },
    };
    // Two threads from the first row: the pass pool the reading started (its first helper read the part).
    const onPool = await runAnalysis(data, spec, { threads: 2, parallelFitRows: 1 });
    const alone = await runAnalysis(data, spec, { threads: 1 });
    expect(onPool).toEqual(alone);
    expect(onPool.n).toBe(3000); // 3000 rows written above, none missing
  });

  it('gives the one-pass data when characters of several bytes cross the second part\'s 1 MiB chunks', async () => {
    // About 3 MB of three-byte characters (€ is E2 82 AC in UTF-8); the second part is read in 1 MiB chunks from its first byte.
    const body = rows(10_000, (row) => `${row % 2},${'€'.repeat(90 + (row % 7))},${row},s`);
    const path = file('euro.csv', `outcome,group,dose,site\n${body}\n`);
    const bytes = readFileSync(path);
    const split = bytes.indexOf(10, Math.floor(bytes.length * 0.55)) + 1;
    // At least one chunk boundary of the part falls inside a character (a continuation byte 10xxxxxx).
    const inside = [1, 2].map((k) => split + k * (1 << 20)).filter((at) => at < bytes.length && (bytes[at] & 0xc0) === 0x80);
    expect(inside.length).toBeGreaterThan(0);
    await sameAsOnePass(path, roles);
  });

  it('refuses a NUL byte or invalid UTF-8 in the second part with the one-pass message and line', async () => {
    for (const [name, bad] of [['nul.csv', '\u0000'], ['latin1.csv', '\u00ff']] as const) {
      const body = rows(200, (row) => `${row % 2},${row === 150 ? `g${bad}` : 'g'},${row},s`);
      // \u00ff is written as the single byte FF, which is not UTF-8 (a Latin-1 ÿ).
      const path = file(name, '');
      writeFileSync(path, Buffer.from(`outcome,group,dose,site\n${body}\n`, name === 'latin1.csv' ? 'latin1' : 'utf8'));
      const one = await readEngineData(path, roles).then(() => 'read', (error: Error) => error.message);
      expect(one).toMatch(/^Line 152: /); // the record of row 150 is on line 152 (header on line 1)
      expect(await readInTwoParts(path, statSync(path).size, roles)).toBeNull();
      await expect(readEngineDataOnTwoThreads(path, roles, 0)).rejects.toThrow(one);
    }
  });

  it('joins a text part and a number part by the union of their levels', () => {
    const joined = joinColumns(
      { name: 'c', storage: 'text', codes: Int32Array.of(1, -1, 0), levels: ['a', 'b'] },
      { name: 'c', storage: 'numeric', values: Float64Array.of(2.5, Number.NaN, -0) },
    );
    // By hand: levels sorted by code unit "0" < "2.5" < "a" < "b"; -0 is written "0"; NaN is missing.
    expect(joined).toEqual({ name: 'c', storage: 'text', codes: Int32Array.of(3, -1, 2, 1, -1, 0), levels: ['0', '2.5', 'a', 'b'] });
  });
});
