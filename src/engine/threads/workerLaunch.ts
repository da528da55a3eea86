import { createRequire } from 'node:module';
import { dirname, join } from 'node:path';
import { pathToFileURL } from 'node:url';

export interface WorkerLaunch {
  readonly url: URL;
  readonly extraData: Record<string, string>;
}

/**
 * How to start a worker whose compiled entry is `compiledEntry` (a .js URL beside the
 * calling module `callerUrl`). From compiled JavaScript the entry is loaded directly.
 * From TypeScript sources (tsx, vitest) the small threadEntry.mjs first registers tsx's
 * module hooks in the new thread (Node 20 does not pass the parent's hooks to workers)
 * and then imports the .ts entry.
 */
export function launchFor(compiledEntry: URL, callerUrl: string): WorkerLaunch {
  if (!callerUrl.endsWith('.ts')) return { url: compiledEntry, extraData: {} };
  const tsxRoot = dirname(createRequire(callerUrl).resolve('tsx/package.json'));
  return {
    url: new URL('./threadEntry.mjs', import.meta.url),
    extraData: {
      tsxApi: pathToFileURL(join(tsxRoot, 'dist', 'esm', 'api', 'index.mjs')).href,
      entry: compiledEntry.href.replace(/\.js$/, '.ts'),
    },
  };
}
