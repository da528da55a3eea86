/**
 * The layout's rules, checked on every test run (DEVELOPERS.md, "Layout"): no import
 * cycle between files or between product areas; no import that goes up a layer; no new
 * source file over 450 lines. The checker (dependencyCheck.ts) is tested first on small
 * made-up graphs, so a rule that could never fail would show here.
 */
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import {
  areaGraph, findCycles, importSpecifiers, layerViolations, newOversizedFiles, readGraph, resolveSpecifier, staleAllowances,
  type ImportGraph, type LayerRule,
} from './dependencyCheck';

const root = path.resolve(import.meta.dirname, '../..');
const LINE_LIMIT = 450;

const RULES: LayerRule[] = [
  { from: 'src/lib/', forbidden: ['src/features/', 'src/pages/', 'src/components/', 'src/layouts/'], reason: 'src/lib is plumbing: it imports no product code' },
  { from: 'src/engine/', onlyWithin: 'src/engine/', reason: 'the engine is pure: it imports nothing outside src/engine' },
  { from: 'src/features/', forbidden: ['src/pages/'], reason: 'a product area never imports a page' },
  { from: 'src/components/', forbidden: ['src/features/', 'src/pages/'], reason: 'shared components know no product area' },
  { from: 'src/layouts/', forbidden: ['src/features/', 'src/pages/'], reason: 'layouts know no product area' },
  { from: 'db/migrations/', forbidden: ['src/features/', 'src/pages/', 'src/engine/'], reason: 'a migration freezes the values it uses; it never follows live product code' },
];

/**
 * Today's oversized files, each with the reason it is still whole. Empty this list as
 * files are split; the test fails when a listed file has come under the limit, so the
 * list only shrinks.
 */
const OVERSIZED_ALLOWED = new Map<string, string>([
]);

describe('the dependency checker itself', () => {
  it('reads static imports, re-exports, side-effect and literal dynamic imports, type imports included', () => {
    const text = [
      "import { a } from './a';",
      "import type { B } from '../b/b.server';",
      "export { c } from './c';",
      "export * from './d';",
      "import './e.css';",
      "const f = await import('./f');",
      "import pg from 'pg';",
    ].join('\n');
    expect(importSpecifiers(text).sort()).toEqual(['../b/b.server', './a', './c', './d', './e.css', './f', 'pg']);
  });

  it('resolves relative specifiers to source files and leaves packages out', () => {
    const files = new Set(['src/x/a.ts', 'src/x/b.tsx', 'src/x/c/index.ts', 'src/x/D.astro']);
    const exists = (file: string) => files.has(file);
    expect(resolveSpecifier('src/x/m.ts', './a', exists)).toBe('src/x/a.ts');
    expect(resolveSpecifier('src/x/m.ts', './a.js', exists)).toBe('src/x/a.ts');
    expect(resolveSpecifier('src/x/m.ts', './b', exists)).toBe('src/x/b.tsx');
    expect(resolveSpecifier('src/x/m.ts', './c', exists)).toBe('src/x/c/index.ts');
    expect(resolveSpecifier('src/y/m.ts', '../x/D.astro', exists)).toBe('src/x/D.astro');
    expect(resolveSpecifier('src/x/m.ts', 'zod', exists)).toBeNull();
    // The tsconfig alias: @/ is src/.
    expect(resolveSpecifier('tests/t.test.ts', '@/x/b', exists)).toBe('src/x/b.tsx');
    expect(resolveSpecifier('src/y/m.ts', '@/x/c', exists)).toBe('src/x/c/index.ts');
  });

  const graph = (edges: Record<string, string[]>): ImportGraph => new Map(Object.entries(edges).map(([k, v]) => [k, new Set(v)]));

  it('finds a two-file circle and a longer one, and nothing in a tree', () => {
    expect(findCycles(graph({ 'a.ts': ['b.ts'], 'b.ts': ['a.ts'], 'c.ts': ['a.ts'] }))).toEqual([['a.ts', 'b.ts']]);
    expect(findCycles(graph({ 'a.ts': ['b.ts'], 'b.ts': ['c.ts'], 'c.ts': ['a.ts'] }))).toEqual([['a.ts', 'b.ts', 'c.ts']]);
    expect(findCycles(graph({ 'a.ts': ['b.ts', 'c.ts'], 'b.ts': ['c.ts'], 'c.ts': [] }))).toEqual([]);
  });

  it('finds two areas leaning on each other although no two files form a circle', () => {
    const files = graph({
      'src/features/analyses/page.server.ts': ['src/features/runs/runs.server.ts'],
      'src/features/runs/tables.ts': ['src/features/analyses/labels.ts'],
      'src/features/runs/runs.server.ts': [],
      'src/features/analyses/labels.ts': [],
    });
    expect(findCycles(files)).toEqual([]);
    expect(findCycles(areaGraph(files))).toEqual([['analyses', 'runs']]);
  });

  it('reports each kind of upward import', () => {
    const files = graph({
      'src/lib/server/catalogue.ts': ['src/features/admin/admin.schema.ts', 'src/lib/server/env.ts'],
      'src/engine/fit/fit.ts': ['src/engine/core/matrix.ts', 'src/lib/csv.ts'],
      'src/features/runs/x.ts': ['src/pages/api/runs.ts', 'src/lib/server/db.ts'],
      'src/components/Badge.astro': ['src/features/runs/x.ts'],
      'db/migrations/2026.x.ts': ['src/features/runs/runQueue.ts', 'src/lib/server/env.ts'],
    });
    expect(layerViolations(files, RULES).map((v) => `${v.from} -> ${v.to}`)).toEqual([
      'db/migrations/2026.x.ts -> src/features/runs/runQueue.ts',
      'src/components/Badge.astro -> src/features/runs/x.ts',
      'src/engine/fit/fit.ts -> src/lib/csv.ts',
      'src/features/runs/x.ts -> src/pages/api/runs.ts',
      'src/lib/server/catalogue.ts -> src/features/admin/admin.schema.ts',
    ]);
  });

  it('reports a new oversized file, spares an allowed one, and reports an allowance no longer needed', () => {
    const lines = new Map([['a.ts', 451], ['b.ts', 900], ['c.ts', 450], ['d.ts', 300]]);
    const allowed = new Map([['b.ts', 'big'], ['d.ts', 'was big']]);
    expect(newOversizedFiles(lines, LINE_LIMIT, allowed)).toEqual(['a.ts (451 lines)']);
    expect(staleAllowances(lines, LINE_LIMIT, allowed)).toEqual(['d.ts']);
  });
});

describe('the code base', () => {
  const { graph, lines } = readGraph(root, ['src', 'db', 'scripts', 'policies']);

  it('is read whole (the check is not looking at an empty tree)', () => {
    expect(graph.size).toBeGreaterThan(150);
    expect(graph.get('src/features/runs/runWorker.ts')).toContain('src/features/runs/executeRun.ts');
  });

  it('has no import cycle between files', () => {
    expect(findCycles(graph)).toEqual([]);
  });

  it('has no cycle between product areas', () => {
    expect(findCycles(areaGraph(graph))).toEqual([]);
  });

  it('has no upward import', () => {
    expect(layerViolations(graph, RULES)).toEqual([]);
  });

  it(`has no new source file over ${LINE_LIMIT} lines, and no allowance left for a file that shrank`, () => {
    expect(newOversizedFiles(lines, LINE_LIMIT, OVERSIZED_ALLOWED)).toEqual([]);
    expect(staleAllowances(lines, LINE_LIMIT, OVERSIZED_ALLOWED)).toEqual([]);
  });
});
