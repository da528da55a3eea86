/**
 * Command line of the engine:
 *   npm run -s engine -- --data FILE.csv --spec SPEC.json [--threads N]
 * prints the result as JSON on stdout; on failure prints {"error": {code, message, ...}}
 * on stderr and exits with status 1 (2 for a usage error).
 *   npm run -s engine -- --write-schemas
 * regenerates spec.schema.json and result.schema.json beside this file.
 */
import { readFile, writeFile } from 'node:fs/promises';
import { fileURLToPath } from 'node:url';
import { EngineError } from '../errors.js';
import { runAnalysis } from '../analysis/runAnalysis.js';
import type { AnalysisSpec } from '../types.js';
import { readCsvFile } from './csv.js';
import { jsonSchemas, SpecSchema } from './schemas.js';

function fail(code: string, message: string, status: number, extra: Record<string, string> = {}): never {
  process.stderr.write(`${JSON.stringify({ error: { code, message, ...extra } })}\n`);
  process.exit(status);
}

function argument(args: string[], name: string): string | undefined {
  const index = args.indexOf(name);
  return index >= 0 ? args[index + 1] : undefined;
}

export async function writeSchemas(): Promise<void> {
  const schemas = jsonSchemas();
  const here = (name: string) => fileURLToPath(new URL(name, import.meta.url));
  await writeFile(here('./spec.schema.json'), `${JSON.stringify(schemas.spec, null, 2)}\n`);
  await writeFile(here('./result.schema.json'), `${JSON.stringify(schemas.result, null, 2)}\n`);
}

async function main(args: string[]): Promise<void> {
  if (args.includes('--write-schemas')) {
    await writeSchemas();
    return;
  }
  const dataPath = argument(args, '--data');
  const specPath = argument(args, '--spec');
  if (!dataPath || !specPath) fail('USAGE', 'Usage: engine --data FILE.csv --spec SPEC.json [--threads N]', 2);
  const threadsText = argument(args, '--threads');
  const threads = threadsText === undefined ? undefined : Number(threadsText);
  if (threads !== undefined && !(Number.isInteger(threads) && threads >= 0 && threads <= 64)) fail('USAGE', '--threads must be an integer from 0 to 64.', 2);

  let specJson: unknown;
  try {
    specJson = JSON.parse(await readFile(specPath, 'utf8'));
  } catch (error) {
    fail('INVALID_SPEC', `The specification file could not be read as JSON: ${(error as Error).message}`, 1);
  }
  const parsed = SpecSchema.safeParse(specJson);
  if (!parsed.success) {
    const issue = parsed.error.issues[0];
    fail('INVALID_SPEC', `The specification is not valid at "${issue.path.join('.') || '(root)'}": ${issue.message}`, 1);
  }
  let data;
  try {
    data = await readCsvFile(dataPath);
  } catch (error) {
    if (error instanceof EngineError) fail(error.code, error.message, 1);
    fail('INVALID_DATA', `The data file could not be read: ${(error as Error).message}`, 1);
  }
  const result = await runAnalysis(data, parsed.data as AnalysisSpec, threads === undefined ? {} : { threads });
  process.stdout.write(`${JSON.stringify(result, null, 2)}\n`);
}

main(process.argv.slice(2)).catch((error: unknown) => {
  if (error instanceof EngineError) {
    const { code, message, ...details } = error.toJSON();
    fail(code, message, 1, details as Record<string, string>);
  }
  fail('INTERNAL', `Unexpected failure: ${(error as Error)?.message ?? String(error)}`, 1);
});
