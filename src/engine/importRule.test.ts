import { readdirSync, readFileSync, statSync } from 'node:fs';
import { dirname, join, relative, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';

/**
 * The engine core imports no framework: outside boundary/ only relative modules,
 * ml-matrix, jstat and (for worker threads, in bootstrap/ and threads/ only) Node's
 * worker_threads, os, module, path and url. Test files may use vitest and node: modules.
 * The specification and result types are inferred from boundary/'s zod schemas; the core
 * reaches boundary/ only through `import type` / `export type`, which leave no trace in
 * the code that runs, so the engine itself never loads zod.
 */
const root = fileURLToPath(new URL('.', import.meta.url));
const ALLOWED_PACKAGES = new Set(['ml-matrix', 'jstat']);
const THREAD_BUILTINS = new Set(['node:worker_threads', 'node:os', 'node:module', 'node:path', 'node:url']);

function sourceFiles(folder: string): string[] {
  return readdirSync(folder).flatMap((name) => {
    const path = join(folder, name);
    if (statSync(path).isDirectory()) return name === 'boundary' ? [] : sourceFiles(path);
    return /\.(ts|mts|mjs|js)$/.test(name) && !name.endsWith('.d.ts') ? [path] : [];
  });
}

function importsOf(text: string): string[] {
  const found: string[] = [];
  const pattern = /(?:^|\s)(?:import|export)\s[^'"]*?from\s+['"]([^'"]+)['"]|import\s*\(\s*['"]([^'"]+)['"]\s*\)|^\s*import\s+['"]([^'"]+)['"]|require\(\s*['"]([^'"]+)['"]\s*\)/gm;
  for (const match of text.matchAll(pattern)) found.push(match[1] ?? match[2] ?? match[3] ?? match[4]);
  return found;
}

/** Relative imports and re-exports of a file that carry values (not `import type` / `export type`). */
function valueImportsOf(text: string): string[] {
  const found: string[] = [];
  const pattern = /(?:^|[\s;])(import|export)(\s+type)?\s*(?:\{[^}]*\}|\*(?:\s+as\s+\w+)?|\w+(?:\s*,\s*\{[^}]*\})?)\s*from\s*['"](\.[^'"]+)['"]|import\s*\(\s*['"](\.[^'"]+)['"]\s*\)|^\s*import\s+['"](\.[^'"]+)['"]/gm;
  for (const match of text.matchAll(pattern)) {
    if (match[2]) continue;
    found.push(match[3] ?? match[4] ?? match[5]);
  }
  return found;
}

const boundary = join(root, 'boundary');

describe('engine import rule', () => {
  const files = sourceFiles(root);
  it('finds the engine sources', () => {
    expect(files.length).toBeGreaterThan(30);
  });
  it('imports nothing outside its allowance', () => {
    const offences: string[] = [];
    for (const file of files) {
      const name = relative(root, file);
      const test = name.endsWith('.test.ts');
      for (const specifier of importsOf(readFileSync(file, 'utf8'))) {
        if (specifier.startsWith('.')) continue;
        if (ALLOWED_PACKAGES.has(specifier)) continue;
        if ((name.startsWith('bootstrap/') || name.startsWith('threads/')) && THREAD_BUILTINS.has(specifier)) continue;
        if (test && (specifier === 'vitest' || specifier.startsWith('node:'))) continue;
        offences.push(`${name} imports ${specifier}`);
      }
    }
    expect(offences).toEqual([]);
  });
  it('reaches boundary/ (and so zod) for types only', () => {
    const offences: string[] = [];
    for (const file of files) {
      for (const specifier of valueImportsOf(readFileSync(file, 'utf8'))) {
        const target = resolve(dirname(file), specifier);
        if (target === boundary || target.startsWith(`${boundary}/`)) offences.push(`${relative(root, file)} imports ${specifier}`);
      }
    }
    expect(offences).toEqual([]);
  });
  it('tells a type-only import from a value import', () => {
    const text = [
      "import type { Spec } from './boundary/schemas.js';",
      'export type Column = { kind: string };',
      "export type {\n  Result,\n} from './boundary/schemas.js';",
      "import { SpecSchema } from '../boundary/schemas.js';",
      "export {\n  Result as AnalysisResult,\n} from './boundary/index.js';",
      "import * as schemas from './boundary/schemas.js';",
    ].join('\n');
    expect(valueImportsOf(text)).toEqual(['../boundary/schemas.js', './boundary/index.js', './boundary/schemas.js']);
  });
  it('detects a forbidden import (the scanner itself works)', () => {
    expect(importsOf("import { z } from 'zod';\nimport x from \"astro:content\";")).toEqual(['zod', 'astro:content']);
  });
});
