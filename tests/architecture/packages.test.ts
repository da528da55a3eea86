/**
 * Every package that package.json declares is used: named by an import, a require, a CSS
 * @import or a configuration (astro.config.mjs, the start and test scripts) somewhere in
 * the repository's sources. A few are used without being named in source; each is listed
 * here with the reason. Drop a package with `npm uninstall NAME` when this test names it.
 */
import { readdirSync, readFileSync, statSync } from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';

const root = path.resolve(import.meta.dirname, '../..');
const SOURCE_FOLDERS = ['src', 'db', 'policies', 'scripts', 'tests', 'bench'];
const SOURCE_FILES = ['astro.config.mjs', 'vitest.config.ts'];
const EXTENSIONS = /\.(ts|tsx|mts|mjs|js|astro|css)$/;

/** Packages used without being named in source, with the reason. */
const USED_UNNAMED = new Map<string, string>([
  ['typescript', 'the type checker behind `npx tsc` and `npm run check`'],
  ['@astrojs/check', '`npm run check` (astro check)'],
  ['vite', 'pins one Vite for Astro, its plugins and vitest (`npm ls vite` shows one copy)'],
]);

function sourceFiles(folder: string): string[] {
  return readdirSync(folder).flatMap((name) => {
    if (name === 'node_modules' || name.startsWith('.')) return [];
    const file = path.join(folder, name);
    if (statSync(file).isDirectory()) return sourceFiles(file);
    return EXTENSIONS.test(name) ? [file] : [];
  });
}

/** True when `text` names the package as a module: 'name', "name" or 'name/sub/path'. */
export function namesPackage(text: string, name: string): boolean {
  const escaped = name.replace(/[.*+?^${}()|[\]\\/]/g, '\\$&');
  return new RegExp(`['"]${escaped}(?:/[^'"]*)?['"]`).test(text);
}

/** The declared packages that no source names and no allowance covers (@types/x counts as used when x is). */
export function unusedPackages(declared: string[], sources: string[], allowed: ReadonlyMap<string, string>): string[] {
  const named = (name: string) => sources.some((text) => namesPackage(text, name));
  const used = (name: string): boolean => {
    if (allowed.has(name)) return true;
    const typed = /^@types\/(.+)$/.exec(name);
    if (typed) {
      const base = typed[1].includes('__') ? `@${typed[1].replace('__', '/')}` : typed[1];
      return base === 'node' || used(base);
    }
    return named(name);
  };
  return declared.filter((name) => !used(name));
}

describe('declared packages', () => {
  it('finds a package by the way source names it, and only so', () => {
    const sources = ["import { z } from 'zod';", "import Busboy from \"busboy\";", "@import 'tailwindcss';", "import x from 'react-dom/client';"];
    expect(unusedPackages(['zod', 'busboy', 'tailwindcss', 'react-dom', 'react', 'left-pad', '@types/busboy', '@types/left-pad', '@types/node'], sources, new Map()))
      .toEqual(['react', 'left-pad', '@types/left-pad']);
    expect(namesPackage("import pg from 'pg-boss';", 'pg')).toBe(false);
  });

  it('are each used', () => {
    const manifest = JSON.parse(readFileSync(path.join(root, 'package.json'), 'utf8')) as { dependencies: Record<string, string>; devDependencies: Record<string, string> };
    const declared = [...Object.keys(manifest.dependencies), ...Object.keys(manifest.devDependencies)];
    const files = [...SOURCE_FOLDERS.flatMap((folder) => sourceFiles(path.join(root, folder))), ...SOURCE_FILES.map((file) => path.join(root, file))];
    const sources = files.filter((file) => !file.endsWith(path.join('architecture', 'packages.test.ts'))).map((file) => readFileSync(file, 'utf8'));
    expect(unusedPackages(declared, sources, USED_UNNAMED)).toEqual([]);
  });
});
