/**
 * The dependency check behind tests/architecture/dependencies.test.ts: reads the import
 * statements of the source files, resolves the relative ones to files, and reports
 * import cycles, imports that go up a layer, and source files over the size limit.
 * Pure functions over a graph, so the check itself is tested on small made-up graphs.
 */
import { existsSync, readdirSync, readFileSync, statSync } from 'node:fs';
import path from 'node:path';

/** file (relative to the root, with / separators) → the files it imports. */
export type ImportGraph = Map<string, Set<string>>;

export interface LayerRule {
  /** Files under this folder… */
  from: string;
  /** …may not import files under any of these folders… */
  forbidden?: readonly string[];
  /** …or, when set, anything outside this folder. */
  onlyWithin?: string;
  reason: string;
}

export interface Violation {
  from: string;
  to: string;
  reason: string;
}

const SOURCE = /\.(ts|tsx|astro|mjs)$/;
const EXTENSIONS = ['.ts', '.tsx', '.astro', '.mjs', '/index.ts', '/index.tsx'];

/** The module specifiers a file names: static imports, re-exports and literal dynamic imports. */
export function importSpecifiers(text: string): string[] {
  const found: string[] = [];
  const patterns = [
    /\bimport\s+(?:type\s+)?[^'"();]*?\sfrom\s+['"]([^'"]+)['"]/g,
    /\bexport\s+(?:type\s+)?(?:\*|\{[^}]*\})\s*(?:as\s+\w+\s+)?from\s+['"]([^'"]+)['"]/g,
    /\bimport\s+['"]([^'"]+)['"]/g,
    /\bimport\(\s*['"]([^'"]+)['"]\s*\)/g,
  ];
  for (const pattern of patterns) for (const match of text.matchAll(pattern)) found.push(match[1]);
  return [...new Set(found)];
}

/** A relative or `@/` specifier resolved to a file of the graph, or null (packages, assets, missing). */
export function resolveSpecifier(fromFile: string, specifier: string, exists: (file: string) => boolean): string | null {
  // `@/` is the tsconfig alias of src/.
  const aliased = specifier.startsWith('@/');
  if (!specifier.startsWith('.') && !aliased) return null;
  const base = aliased
    ? path.posix.normalize(`src/${specifier.slice(2)}`)
    : path.posix.normalize(path.posix.join(path.posix.dirname(fromFile), specifier));
  const stripped = base.replace(/\.js$/, '');
  for (const candidate of [base, ...EXTENSIONS.map((ext) => stripped + ext)]) {
    if (SOURCE.test(candidate) && exists(candidate)) return candidate;
  }
  return null;
}

function walk(root: string, dir: string, out: string[]): void {
  for (const name of readdirSync(path.join(root, dir))) {
    const rel = path.posix.join(dir, name);
    if (statSync(path.join(root, rel)).isDirectory()) walk(root, rel, out);
    else if (SOURCE.test(name) && !/\.test\.tsx?$/.test(name)) out.push(rel);
  }
}

/** The import graph of every non-test source file under `dirs` (relative to `root`). */
export function readGraph(root: string, dirs: readonly string[]): { graph: ImportGraph; lines: Map<string, number> } {
  const files: string[] = [];
  for (const dir of dirs) walk(root, dir, files);
  const known = new Set(files);
  const exists = (file: string) => known.has(file) || existsSync(path.join(root, file));
  const graph: ImportGraph = new Map();
  const lines = new Map<string, number>();
  for (const file of files) {
    const text = readFileSync(path.join(root, file), 'utf8');
    lines.set(file, text.split('\n').length - (text.endsWith('\n') ? 1 : 0));
    const targets = new Set<string>();
    for (const specifier of importSpecifiers(text)) {
      const target = resolveSpecifier(file, specifier, exists);
      if (target) targets.add(target);
    }
    graph.set(file, targets);
  }
  return { graph, lines };
}

/** Every import cycle, as the files of each strongly connected group (Tarjan), sorted. */
export function findCycles(graph: ImportGraph): string[][] {
  let counter = 0;
  const index = new Map<string, number>();
  const low = new Map<string, number>();
  const stack: string[] = [];
  const onStack = new Set<string>();
  const cycles: string[][] = [];
  const visit = (node: string) => {
    index.set(node, counter);
    low.set(node, counter);
    counter += 1;
    stack.push(node);
    onStack.add(node);
    for (const next of graph.get(node) ?? []) {
      if (!index.has(next)) {
        visit(next);
        low.set(node, Math.min(low.get(node) ?? 0, low.get(next) ?? 0));
      } else if (onStack.has(next)) {
        low.set(node, Math.min(low.get(node) ?? 0, index.get(next) ?? 0));
      }
    }
    if (low.get(node) === index.get(node)) {
      const group: string[] = [];
      let member: string | undefined;
      do {
        member = stack.pop();
        if (member === undefined) break;
        onStack.delete(member);
        group.push(member);
      } while (member !== node);
      if (group.length > 1 || graph.get(node)?.has(node)) cycles.push(group.sort());
    }
  };
  for (const node of [...graph.keys()].sort()) if (!index.has(node)) visit(node);
  return cycles.sort((a, b) => a[0].localeCompare(b[0]));
}

/** Imports that break a layer rule. */
export function layerViolations(graph: ImportGraph, rules: readonly LayerRule[]): Violation[] {
  const out: Violation[] = [];
  for (const [from, targets] of graph) {
    for (const rule of rules) {
      if (!from.startsWith(rule.from)) continue;
      for (const to of targets) {
        const upward = rule.forbidden?.some((folder) => to.startsWith(folder)) || (rule.onlyWithin !== undefined && !to.startsWith(rule.onlyWithin));
        if (upward) out.push({ from, to, reason: rule.reason });
      }
    }
  }
  return out.sort((a, b) => a.from.localeCompare(b.from) || a.to.localeCompare(b.to));
}

/** Files over `limit` lines that the allow-list does not name. */
export function newOversizedFiles(lines: ReadonlyMap<string, number>, limit: number, allowed: ReadonlyMap<string, string>): string[] {
  return [...lines].filter(([file, count]) => count > limit && !allowed.has(file)).map(([file, count]) => `${file} (${count} lines)`).sort();
}

/** Allow-listed files that are no longer over the limit (or gone): the list should shrink with them. */
export function staleAllowances(lines: ReadonlyMap<string, number>, limit: number, allowed: ReadonlyMap<string, string>): string[] {
  return [...allowed.keys()].filter((file) => (lines.get(file) ?? 0) <= limit).sort();
}

/**
 * The graph between product areas (`src/features/<area>`): a cycle here means two areas
 * lean on each other, even when no two files do. Imports within an area are left out.
 */
export function areaGraph(graph: ImportGraph, areasRoot = 'src/features/'): ImportGraph {
  const areaOf = (file: string) => (file.startsWith(areasRoot) ? file.slice(areasRoot.length).split('/')[0] : null);
  const areas: ImportGraph = new Map();
  for (const [from, targets] of graph) {
    const a = areaOf(from);
    if (a === null) continue;
    const edges = areas.get(a) ?? new Set<string>();
    areas.set(a, edges);
    for (const to of targets) {
      const b = areaOf(to);
      if (b !== null && b !== a) edges.add(b);
    }
  }
  return areas;
}
