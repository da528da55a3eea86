import { execFile } from 'node:child_process';
import { mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { promisify } from 'node:util';
import { describe, expect, it } from 'vitest';
import { parseCsv } from './csv.js';
import { ErrorSchema, jsonSchemas, ResultSchema } from './schemas.js';

const run = promisify(execFile);
const repository = fileURLToPath(new URL('../../..', import.meta.url));
const cli = fileURLToPath(new URL('./cli.ts', import.meta.url));
const tsx = join(repository, 'node_modules', '.bin', 'tsx');

describe('CSV reader', () => {
  it('reads RFC 4180 quoting and treats empty fields as missing', () => {
    const data = parseCsv('id,group,score\r\n1,"a, quoted ""x""",2.5\r\n2,,\r\n3,b,-1e3\r\n');
    expect(data.rowCount).toBe(3);
    const group = data.columns.group;
    const score = data.columns.score;
    expect(group.kind).toBe('categorical');
    if (group.kind === 'categorical') {
      expect(group.levels).toEqual(['a, quoted "x"', 'b']);
      expect(Array.from(group.codes)).toEqual([0, -1, 1]);
      expect(Array.from(group.missing!)).toEqual([0, 1, 0]);
    }
    expect(score.kind).toBe('numeric');
    if (score.kind === 'numeric') {
      expect(score.values[0]).toBe(2.5);
      expect(Number.isNaN(score.values[1])).toBe(true);
      expect(score.values[2]).toBe(-1000);
    }
  });
  it('rejects ragged rows and duplicate headers with a readable error', () => {
    expect(() => parseCsv('a,b\n1,2,3\n')).toThrow(/could not be read/);
    expect(() => parseCsv('a,a\n1,2\n')).toThrow(/twice/);
  });
});

describe('JSON Schema files', () => {
  it('result.schema.json and spec.schema.json are current (regenerate: npm run -s engine -- --write-schemas)', () => {
    const schemas = jsonSchemas();
    const committed = (name: string) => JSON.parse(readFileSync(fileURLToPath(new URL(name, import.meta.url)), 'utf8'));
    expect(committed('./result.schema.json')).toEqual(JSON.parse(JSON.stringify(schemas.result)));
    expect(committed('./spec.schema.json')).toEqual(JSON.parse(JSON.stringify(schemas.spec)));
  });
});

describe('command line', () => {
  const folder = mkdtempSync(join(tmpdir(), 'engine-cli-'));
  const data = join(repository, 'tests', 'reference', 'data', 'infert.csv');
  const spec = {
    outcome: { column: 'case', type: 'binary' },
    exposure: { column: 'induced_any', reference: '0' },
    modifier: { column: 'spontaneous', type: 'categorical', reference: '0' },
    covariates: [{ column: 'age', type: 'continuous' }],
    model: 'logistic',
    ci: { level: 0.95, method: 'delta' },
  };

  it('prints a result that matches the result schema', async () => {
    const specPath = join(folder, 'spec.json');
    writeFileSync(specPath, JSON.stringify(spec));
    const { stdout } = await run(tsx, [cli, '--data', data, '--spec', specPath], { cwd: repository });
    const result = ResultSchema.parse(JSON.parse(stdout));
    expect(result.n).toBe(248); // infert has 248 rows (R datasets::infert)
    expect(result.interaction.additive).toHaveLength(2);
  });

  it('prints a JSON error on stderr and exits non-zero', async () => {
    const specPath = join(folder, 'bad.json');
    writeFileSync(specPath, JSON.stringify({ ...spec, modifier: { ...spec.modifier, column: 'no_such_column' } }));
    const failure = await run(tsx, [cli, '--data', data, '--spec', specPath], { cwd: repository }).then(
      () => null,
      (error: { code: number; stderr: string }) => error,
    );
    expect(failure).not.toBeNull();
    expect(failure!.code).toBe(1);
    const parsed = ErrorSchema.parse(JSON.parse(failure!.stderr));
    expect(parsed.error).toMatchObject({ code: 'COLUMN_NOT_FOUND', column: 'no_such_column' });
  });
});
