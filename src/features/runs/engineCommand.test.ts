/**
 * The engine command as `npm run engine` runs it: the bundle built ahead (scripts/
 * engineCommand.mjs) on a CSV file, compared with a direct engine call on the same data,
 * and its JSON errors. The data are R's datasets::infert (tests/reference/data/infert.csv).
 */
import { execFile } from 'node:child_process';
import { createReadStream, mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { promisify } from 'node:util';
import { beforeAll, describe, expect, it } from 'vitest';
import { runAnalysis, type EngineColumn, type EngineData } from '@/engine';
import { ErrorSchema, ResultSchema, type Spec } from '@/engine/boundary/schemas';
import { ERROR_CODE } from '@/lib/server/errors';
import { ColumnSet } from '../extracts/columnAccumulator';
import { decodeCodes, decodeNumericValues, encodeColumn } from '../extracts/columnStore';
import { readCsv } from '../extracts/csvReader';
import { toEngineData, type StoredColumn } from '../extracts/engineData';
import { columnRoles } from './columnRoles';
import { readEngineData } from './engineInput';

const run = promisify(execFile);
const repository = fileURLToPath(new URL('../../..', import.meta.url));
const launcher = join(repository, 'scripts', 'engineCommand.mjs');
const infert = join(repository, 'tests', 'reference', 'data', 'infert.csv');
const folder = mkdtempSync(join(tmpdir(), 'engine-command-'));

const spec: Spec = {
  outcome: { column: 'case', type: 'binary' },
  exposure: { column: 'induced_any', reference: '0' },
  modifier: { column: 'spontaneous', type: 'categorical', reference: '0' },
  covariates: [{ column: 'age', type: 'continuous' }, { column: 'education', type: 'categorical' }],
  model: 'logistic',
  ci: { level: 0.95, method: 'delta' },
};

function file(name: string, text: string): string {
  const path = join(folder, name);
  writeFileSync(path, text);
  return path;
}

async function command(args: string[]): Promise<{ code: number; stdout: string; stderr: string }> {
  return run(process.execPath, [launcher, ...args], { cwd: repository }).then(
    ({ stdout, stderr }) => ({ code: 0, stdout, stderr }),
    (error: { code: number; stdout: string; stderr: string }) => ({ code: error.code, stdout: error.stdout, stderr: error.stderr }),
  );
}

/**
 * The engine data written out by hand from a small CSV without quotes inside fields: numbers
 * as numbers (empty or NA missing), text as sorted levels, a number column used as a
 * category coded by its values in numeric order (the rule of extracts/engineData.ts).
 */
function handBuilt(text: string, roles: Record<string, 'categorical' | 'continuous'>): EngineData {
  const [head, ...lines] = text.trim().split('\n');
  const names = head.split(',').map((name) => name.replaceAll('"', ''));
  const rows = lines.map((line) => line.split(',').map((field) => field.replaceAll('"', '')));
  const columns: Record<string, EngineColumn> = {};
  for (const [name, role] of Object.entries(roles)) {
    const fields = rows.map((row) => row[names.indexOf(name)]);
    const present = fields.filter((field) => field !== '' && field !== 'NA');
    const numeric = present.every((field) => /^-?\d+(\.\d+)?$/.test(field));
    if (numeric && role === 'continuous') {
      columns[name] = { kind: 'numeric', values: Float64Array.from(fields, (f) => (f === '' || f === 'NA' ? Number.NaN : Number(f))) };
      continue;
    }
    const levels = numeric
      ? [...new Set(present.map(Number))].sort((a, b) => a - b).map(String)
      : [...new Set(present)].sort();
    const key = (field: string) => (numeric ? String(Number(field)) : field);
    columns[name] = { kind: 'categorical', levels, codes: Int32Array.from(fields, (f) => (f === '' || f === 'NA' ? -1 : levels.indexOf(key(f)))) };
  }
  return { rowCount: rows.length, columns };
}

/** The upload path: read, encode for storage, decode as a run loads it, adapt for the engine. */
async function uploadPath(path: string, roles: Record<string, 'categorical' | 'continuous'>): Promise<EngineData> {
  const sink = new ColumnSet();
  const summary = await readCsv(createReadStream(path), sink);
  const stored = sink.finish().map((column): StoredColumn => {
    const encoded = encodeColumn(column);
    return encoded.storage === 'numeric'
      ? { name: encoded.name, storage: 'numeric', values: decodeNumericValues(encoded.values, encoded.rowCount) }
      : { name: encoded.name, storage: 'text', codes: decodeCodes(encoded.values, encoded.rowCount, encoded.levels!.length), levels: encoded.levels! };
  });
  return toEngineData(summary.recordCount, stored, roles);
}

beforeAll(async () => {
  // Build once here, so that the cases below do not race to rebuild a stale bundle.
  await run(process.execPath, [launcher, '--build-only'], { cwd: repository });
}, 120_000);

describe('engine command', () => {
  const specPath = file('spec.json', JSON.stringify(spec));
  // infert with some ages removed, written empty and as NA: the rows drop out as incomplete.
  const lines = readFileSync(infert, 'utf8').trim().split('\n');
  const holed = lines.map((line, index) => {
    if (index === 0 || index % 37 !== 0) return line;
    const fields = line.split(',');
    fields[5] = index % 2 === 0 ? '' : 'NA';
    return fields.join(',');
  }).join('\n');
  const holedPath = file('infert-holes.csv', `${holed}\n`);

  it('gives the result of a direct engine call on the same data, identically', async () => {
    for (const path of [infert, holedPath]) {
      const { code, stdout, stderr } = await command(['--data', path, '--spec', specPath, '--threads', '0']);
      expect(stderr).toBe('');
      expect(code).toBe(0);
      const printed = ResultSchema.parse(JSON.parse(stdout));
      const direct = await runAnalysis(handBuilt(readFileSync(path, 'utf8'), columnRoles(spec)), spec, { threads: 0 });
      expect(stdout).toBe(`${JSON.stringify(direct, null, 2)}\n`);
      expect(printed.n).toBe(path === infert ? 248 : 248 - 6); // 248 rows in R's datasets::infert; 6 ages removed above (lines 37, 74, ..., 222)
    }
  });

  it('runs the bootstrap on the bundled worker threads, with the bits of a direct call in process', async () => {
    const bootstrap: Spec = { ...spec, ci: { level: 0.95, method: 'bootstrap', replicates: 100, seed: 11 } };
    const { code, stdout, stderr } = await command(['--data', infert, '--spec', file('bootstrap.json', JSON.stringify(bootstrap)), '--threads', '2']);
    expect(stderr).toBe('');
    expect(code).toBe(0);
    const direct = await runAnalysis(handBuilt(readFileSync(infert, 'utf8'), columnRoles(bootstrap)), bootstrap, { threads: 0 });
    expect(stdout).toBe(`${JSON.stringify(direct, null, 2)}\n`);
  });

  it('reads a file into the same engine data as the upload path', async () => {
    const roles = columnRoles(spec);
    for (const path of [infert, holedPath]) {
      const { lineOfRow, ...read } = await readEngineData(path, roles);
      expect(read).toEqual(await uploadPath(path, roles));
      expect(lineOfRow?.(0)).toBe(2); // the first data row is line 2, under the header
    }
  });

  it('names the value, the column and the file line of text in a numeric column', async () => {
    // Line 41 of the file (index 40: the header is line 1) gets a text age.
    const texted = lines.map((line, index) => {
      if (index !== 40) return line;
      const fields = line.split(',');
      fields[5] = 'see chart';
      return fields.join(',');
    }).join('\n');
    const { code, stderr } = await command(['--data', file('infert-text.csv', `${texted}\n`), '--spec', specPath]);
    expect(code).toBe(1);
    const error = ErrorSchema.parse(JSON.parse(stderr)).error;
    expect(error.message).toMatch(/"see chart".*line 41/);
    // The product's code for the engine's refusal, as a failed run shows it (runFailure.ts).
    expect(error).toMatchObject({ code: 'column-type-mismatch', column: 'age' });
    expect(error.code).toMatch(ERROR_CODE);
  });

  it('reports a file that does not exist', async () => {
    const { code, stderr } = await command(['--data', join(folder, 'absent.csv'), '--spec', specPath]);
    expect(code).toBe(1);
    expect(ErrorSchema.parse(JSON.parse(stderr)).error).toMatchObject({ code: 'invalid-data', message: expect.stringMatching(/could not be read.*absent\.csv/) });
  });

  it('reports a ragged row by its line', async () => {
    const ragged = file('ragged.csv', `${lines.slice(0, 4).join('\n')}\n1,1,2\n${lines.slice(4, 6).join('\n')}\n`);
    const { code, stdout, stderr } = await command(['--data', ragged, '--spec', specPath]);
    expect(code).toBe(1);
    expect(stdout).toBe('');
    expect(ErrorSchema.parse(JSON.parse(stderr)).error).toMatchObject({ code: 'invalid-data', message: expect.stringMatching(/^Line 5: this row has 3 fields but the header has 7/) });
  });

  it('reports a specification that is not JSON or not valid', async () => {
    const notJson = await command(['--data', infert, '--spec', file('not-json.json', '{"outcome":')]);
    expect(notJson.code).toBe(1);
    expect(ErrorSchema.parse(JSON.parse(notJson.stderr)).error.code).toBe('invalid-specification');
    const invalid = await command(['--data', infert, '--spec', file('invalid.json', JSON.stringify({ ...spec, model: 'probit' }))]);
    expect(invalid.code).toBe(1);
    expect(ErrorSchema.parse(JSON.parse(invalid.stderr)).error).toMatchObject({ code: 'invalid-specification', message: expect.stringContaining('"model"') });
  });

  it('reports a column the file lacks as the engine names it', async () => {
    const missing = file('missing-column.json', JSON.stringify({ ...spec, modifier: { ...spec.modifier, column: 'no_such_column' } }));
    const { code, stderr } = await command(['--data', infert, '--spec', missing]);
    expect(code).toBe(1);
    expect(ErrorSchema.parse(JSON.parse(stderr)).error).toMatchObject({ code: 'column-not-found', column: 'no_such_column' });
  });

  it('exits with status 2 for a usage error', async () => {
    for (const args of [['--data', infert], ['--data', infert, '--spec', specPath, '--threads', 'many']]) {
      const { code, stderr } = await command(args);
      expect(code).toBe(2);
      expect(ErrorSchema.parse(JSON.parse(stderr)).error.code).toBe('usage');
    }
  });
});
