/**
 * Missing-value tokens end to end (issue 9, item 2): R's infert data with NA, ".", "N/A",
 * "NULL", "-", "NaN" and empty fields written into the categorical modifier, a continuous
 * covariate, the intervention and the outcome (the modifier is whether there were spontaneous
 * abortions, written as the words none and one or more), read through the upload pipeline's reader
 * and columns, handed to the engine, and compared with R's complete-case fit of the same
 * file. Nothing here is a stored number: R is run on the file the test writes.
 */
import { execFileSync } from 'node:child_process';
import { mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { runAnalysis } from '@/engine/index.js';
import type { AnalysisSpec } from '@/engine/types.js';
import { readExtractColumns } from '@/features/extracts/extracts.js';
import { toEngineData, type StoredColumn } from '@/features/extracts/engineData.js';
import type { ColumnData } from '@/features/extracts/columnAccumulator.js';
import { referenceRoot } from './support/loadFixtures.js';
import { expectClose } from './support/tolerance.js';

function rscriptAvailable(): boolean {
  try {
    execFileSync('Rscript', ['--version'], { stdio: 'ignore' });
    return true;
  } catch {
    return false;
  }
}

/** Column positions in infert.csv: case, induced_any, spontaneous, spontaneous_any, education, age, parity. */
const CASE = 0;
const INDUCED = 1;
const SPONTANEOUS = 2;
/** The modifier is infert's count of spontaneous abortions written as text levels. */
const SPONTANEOUS_LABEL: Record<string, string> = { '0': 'none', '1': 'one or more', '2': 'one or more' };
const AGE = 5;

/** Which token goes where (row = 0-based data row); every role gets several kinds. */
function tokenFor(row: number, column: number): string | null {
  if (column === SPONTANEOUS) return row % 19 === 2 ? 'NA' : row % 19 === 7 ? '.' : row % 23 === 5 ? 'N/A' : row % 29 === 11 ? 'null' : null;
  if (column === AGE) return row % 17 === 3 ? 'NULL' : row % 17 === 11 ? '-' : row % 29 === 13 ? 'NA' : row % 53 === 30 ? '' : null;
  if (column === INDUCED) return row % 31 === 4 ? '.' : row % 37 === 9 ? '-' : row % 41 === 16 ? 'nan' : null;
  if (column === CASE) return row % 41 === 6 ? 'NA' : row % 43 === 20 ? 'NULL' : row % 47 === 1 ? 'NaN' : row % 59 === 33 ? 'n/a' : null;
  return null;
}

/** Codes the analyst declares missing at confirmation, placed on other rows. */
function declaredFor(row: number, column: number): string | null {
  if (column === SPONTANEOUS && row % 27 === 8) return 'unknown';
  if (column === AGE && row % 31 === 20) return '999';
  return null;
}

function fileWithTokens(declared = false): string {
  const [header, ...rows] = readFileSync(join(referenceRoot, 'data', 'infert.csv'), 'utf8').trim().split('\n');
  const written = rows.map((line, row) =>
    line
      .split(',')
      .map((field, column) => tokenFor(row, column) ?? (declared ? declaredFor(row, column) : null) ?? (column === SPONTANEOUS ? SPONTANEOUS_LABEL[field] : field))
      .join(','),
  );
  return `${[header, ...written].join('\n')}\n`;
}

function stored(columns: ColumnData[]): StoredColumn[] {
  return columns.map((c) => (c.kind === 'numeric' ? { name: c.name, storage: 'numeric', values: c.values } : { name: c.name, storage: 'text', codes: c.codes, levels: c.levels }));
}

const spec: AnalysisSpec = {
  outcome: { column: 'case', type: 'binary' },
  exposure: { column: 'induced_any', reference: '0' },
  modifier: { column: 'spontaneous', type: 'categorical', reference: 'none' },
  covariates: [{ column: 'age', type: 'continuous' }],
  model: 'logistic',
  ci: { level: 0.95, method: 'delta' },
};

// The R side. R's na.strings is case-sensitive, so the lower-case spellings the file uses
// (null, nan, n/a) are listed besides the shared tokens; everything else is the call the
// issue names: read.csv(na.strings = c("", "NA", "N/A", "NULL", ".", "-", "NaN")).
// A second argument adds the declared codes to na.strings.
const R_SCRIPT = String.raw`
args <- commandArgs(trailingOnly = TRUE)
na <- c("", "NA", "N/A", "NULL", ".", "-", "NaN", "null", "nan", "n/a", if (length(args) > 1) strsplit(args[2], ",")[[1]])
d <- read.csv(args[1], na.strings = na)
used <- c("case", "induced_any", "spontaneous", "age")
cc <- complete.cases(d[used])
d <- d[cc, ]
d$spontaneous <- factor(d$spontaneous, levels = c("none", "one or more"))
fit <- glm(case ~ induced_any * spontaneous + age, family = binomial, data = d, control = glm.control(epsilon = 1e-14, maxit = 100))
b <- coef(fit)
or <- c(exp(b["induced_any"]), exp(b["induced_any"] + b["induced_any:spontaneousone or more"]))
missing <- colSums(is.na(read.csv(args[1], na.strings = na)[used]))
cat(sum(cc), sum(!cc), sprintf("%.17g", as.numeric(logLik(fit))), sprintf("%.17g", deviance(fit)), sprintf("%.17g", or), missing, "\n")
`;

describe.skipIf(!rscriptAvailable())('missing-value tokens in every role (issue 9)', () => {
  it('are left out as R complete cases are, with the same fit and per-column counts', async () => {
    await compareWithR(false);
  });

  it('codes declared missing at confirmation (unknown, 999) are left out too, as R does with them in na.strings', async () => {
    await compareWithR(true);
  });
});

async function compareWithR(declare: boolean): Promise<void> {
  const folder = mkdtempSync(join(tmpdir(), 'missing-tokens-'));
  const file = join(folder, 'infert-tokens.csv');
  const text = fileWithTokens(declare);
  writeFileSync(file, text);
  writeFileSync(join(folder, 'reference.R'), R_SCRIPT);
  // Rscript reference.R infert-tokens.csv [unknown,999] (R 4.x): complete cases, glm logLik, deviance,
  // the two stratum odds ratios of induced_any, and is.na counts of case, induced_any, spontaneous, age.
  const rArgs = [join(folder, 'reference.R'), file, ...(declare ? ['unknown,999'] : [])];
  const r = execFileSync('Rscript', rArgs, { encoding: 'utf8' }).trim().split(/\s+/).map(Number);
  const [rKept, rDropped, rLogLik, rDeviance, orNone, orSome, ...rMissing] = r;

  const read = await readExtractColumns([text]);
  const byName = new Map(read.columns.map((c) => [c.name, c]));
  // The tokens never became levels or text: the modifier keeps its two levels, the numbers stay numbers.
  if (!declare) expect(byName.get('spontaneous')).toMatchObject({ kind: 'text', levels: ['none', 'one or more'] });
  for (const name of ['case', 'induced_any', 'age']) expect(byName.get(name)?.kind, name).toBe('numeric');
  expect(byName.get('age')?.missingTokens.map((t) => t.token)).toEqual(['', 'NA', 'NULL', '-']);

  const roles = { case: 'categorical', induced_any: 'categorical', spontaneous: 'categorical', age: 'continuous' } as const;
  // Declared codes are compared ignoring case, so "Unknown" as declared matches "unknown" in the file.
  const declared: Record<string, string[]> = declare ? { spontaneous: ['Unknown'], age: ['999'] } : {};
  const data = toEngineData(read.read.recordCount, stored(read.columns), roles, declared);
  if (declare) expect(byName.get('spontaneous')).toMatchObject({ levels: ['none', 'one or more', 'unknown'] });
  const result = await runAnalysis(data, spec, { threads: 0 });

  expect([result.n, result.dropped]).toEqual([rKept, rDropped]);
  expect(result.missingByColumn).toEqual(
    ['case', 'induced_any', 'spontaneous', 'age'].map((column, k) => ({ column, rows: rMissing[k] })).filter((e) => e.rows > 0),
  );
  expectClose(result.model.logLik, rLogLik, 'logLik');
  expectClose(result.model.deviance, rDeviance, 'deviance');
  const strata = new Map(result.strata.map((s) => [s.level, s.effect.estimate]));
  expectClose(strata.get('none'), orNone, 'OR among none');
  expectClose(strata.get('one or more'), orSome, 'OR among one or more');
  expect(result.warnings.find((w) => w.code === 'ROWS_DROPPED')?.message).toContain('"spontaneous"');
  expect(result.warnings.some((w) => w.code === 'POSSIBLE_MISSING_CODE')).toBe(false);
}
