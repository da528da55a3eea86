/// <reference types="vitest/config" />
import { getViteConfig } from 'astro/config';

// Astro's Vite config lets tests import .astro files and share the app's aliases.
// Two projects: `engine` is pure computation (no services), `app` needs the throwaway
// PostgreSQL cluster (and, for tests/browser, the built server) that scripts/test.mjs starts.
export default getViteConfig({
  // Test runs create database clusters, uploads and screenshots inside the project: the
  // watcher must not follow them (thousands of files would exhaust the watch limit).
  server: { watch: { ignored: ['**/.data/**', '**/.test-artifacts/**', '**/dist/**', '**/.build/**', '**/node_modules/**'] } },
  test: {
    testTimeout: 60_000,
    hookTimeout: 120_000,
    projects: [
      {
        extends: true,
        test: {
          name: 'engine',
          include: ['src/engine/**/*.test.ts', 'tests/reference/**/*.test.ts'],
        },
      },
      {
        extends: true,
        test: {
          name: 'app',
          include: [
            'src/**/*.test.ts',
            'db/**/*.test.ts',
            'policies/**/*.test.ts',
            'tests/**/*.test.ts',
          ],
          exclude: ['src/engine/**', 'tests/reference/**', 'node_modules/**'],
          globalSetup: ['tests/setup/global.ts'],
          fileParallelism: false,
        },
      },
    ],
  },
});
