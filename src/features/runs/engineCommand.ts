/**
 * The engine on a CSV file, from the command line:
 *   npm run -s engine -- --data FILE.csv --spec SPEC.json [--threads N]
 * prints the result as JSON on stdout; on failure prints {"error": {code, message, ...}}
 * on stderr and exits with status 1 (2 for a usage error). The codes are the product's
 * kebab-case ones, the same a failed run shows (runFailure.ts): `usage`,
 * `invalid-specification`, `invalid-data`, an engine refusal's code (`column-not-found`, ...)
 * or `internal-error`.
 *
 * The file is read exactly as an upload is (engineInput.ts; a large file on two threads,
 * twoThreadEngineInput.ts, with the same result). `npm run engine` runs this
 * module bundled ahead of time (scripts/engineCommand.mjs rebuilds the bundle when it is
 * missing or older than its sources), so nothing is compiled at start.
 */
import { readFile, stat } from 'node:fs/promises';
import { resolve } from 'node:path';
import { EngineError, runAnalysis } from '@/engine';
import { defaultThreadCount } from '@/engine/bootstrap/percentileBootstrap';
import { SpecSchema } from '@/engine/boundary/schemas';
import { ExtractRefusalError } from '../extracts/extractRefusal';
import { columnRoles } from './columnRoles';
import { EngineInputError, readEngineData } from './engineInput';
import { INTERNAL_ERROR, productCode } from './runFailure';
import { readEngineDataOnTwoThreads, TWO_THREAD_MIN_BYTES } from './twoThreadEngineInput';


const USAGE = 'usage';
const INVALID_SPEC = productCode('INVALID_SPEC');
const INVALID_DATA = productCode('INVALID_DATA');

class CommandFailure extends Error {
  constructor(
    readonly code: string,
    message: string,
    readonly status: number,
    readonly details: Record<string, string> = {},
  ) {
    super(message);
  }
}

function argument(args: string[], name: string): string | undefined {
  const index = args.indexOf(name);
  return index >= 0 ? args[index + 1] : undefined;
}

/** A file argument, relative to the folder npm was started in (npm runs scripts from the project's). */
function fileArgument(args: string[], name: string): string | undefined {
  const path = argument(args, name);
  return path === undefined ? undefined : resolve(process.env.INIT_CWD ?? process.cwd(), path);
}

async function main(args: string[]): Promise<void> {
  const dataPath = fileArgument(args, '--data');
  const specPath = fileArgument(args, '--spec');
  if (!dataPath || !specPath) throw new CommandFailure(USAGE, 'Usage: engine --data FILE.csv --spec SPEC.json [--threads N]', 2);
  const threadsText = argument(args, '--threads');
  const threads = threadsText === undefined ? undefined : Number(threadsText);
  if (threads !== undefined && !(Number.isInteger(threads) && threads >= 0 && threads <= 64)) {
    throw new CommandFailure(USAGE, '--threads must be an integer from 0 to 64.', 2);
  }

  let specJson: unknown;
  try {
    specJson = JSON.parse(await readFile(specPath, 'utf8'));
  } catch (error) {
    throw new CommandFailure(INVALID_SPEC, `The specification file could not be read as JSON: ${(error as Error).message}`, 1);
  }
  const parsed = SpecSchema.safeParse(specJson);
  if (!parsed.success) {
    const issue = parsed.error.issues[0];
    throw new CommandFailure(INVALID_SPEC, `The specification is not valid at "${issue.path.join('.') || '(root)'}": ${issue.message}`, 1);
  }
  // The engine starts its helper threads for a large fit on first use; on a large file they
  // are started now, so that they boot while the file is read (the same process-wide pool is
  // then reused), and the first of them also reads the file's second part meanwhile (same
  // values and messages as one pass; twoThreadEngineInput.ts). That shortens the command on
  // a machine with a core to spare and costs 0.2-0.35 s more CPU in all (the helper compiles
  // the reader again for itself), about even in time on a machine whose cores are all busy
  // (the README's engine command figures).
  const helpers = (threads ?? defaultThreadCount()) - 1;
  const size = await stat(dataPath).then((info) => info.size, () => 0);
  const twoParts = helpers > 0 && size >= TWO_THREAD_MIN_BYTES;
  let data;
  try {
    const roles = columnRoles(parsed.data);
    data = twoParts ? await readEngineDataOnTwoThreads(dataPath, roles, TWO_THREAD_MIN_BYTES, helpers) : await readEngineData(dataPath, roles);
  } catch (error) {
    if (error instanceof ExtractRefusalError || error instanceof EngineInputError) {
      const column: Record<string, string> = error instanceof EngineInputError && error.column !== undefined ? { column: error.column } : {};
      throw new CommandFailure(INVALID_DATA, error.message, 1, column);
    }
    throw new CommandFailure(INVALID_DATA, `The data file could not be read: ${(error as Error).message}`, 1);
  }
  const result = await runAnalysis(data, parsed.data, threads === undefined ? {} : { threads });
  process.stdout.write(`${JSON.stringify(result, null, 2)}\n`);
}

main(process.argv.slice(2)).catch((error: unknown) => {
  let failure: CommandFailure;
  if (error instanceof CommandFailure) failure = error;
  else if (error instanceof EngineError) {
    const { code, message, ...details } = error.toJSON();
    failure = new CommandFailure(productCode(code), message, 1, details);
  } else failure = new CommandFailure(INTERNAL_ERROR, `Unexpected failure: ${(error as Error)?.message ?? String(error)}`, 1);
  process.stderr.write(`${JSON.stringify({ error: { code: failure.code, message: failure.message, ...failure.details } })}\n`);
  process.exitCode = failure.status;
});
