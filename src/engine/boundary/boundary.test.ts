import { readFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';
import { jsonSchemas } from './schemas.js';

// The engine command and its CSV reading are tested in src/features/runs/engineCommand.test.ts.

describe('JSON Schema files', () => {
  it('result.schema.json and spec.schema.json are current (regenerate: npm run -s engine -- --write-schemas)', () => {
    const schemas = jsonSchemas();
    const committed = (name: string) => JSON.parse(readFileSync(fileURLToPath(new URL(name, import.meta.url)), 'utf8'));
    expect(committed('./result.schema.json')).toEqual(JSON.parse(JSON.stringify(schemas.result)));
    expect(committed('./spec.schema.json')).toEqual(JSON.parse(JSON.stringify(schemas.spec)));
  });
});
