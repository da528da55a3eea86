/**
 * Engine command benchmark (issue 9): `npm run -s engine -- --data F --spec S` on a seeded
 * synthetic 1,000,000-row × 12-column extract (bench/support/syntheticExtract.ts; invented,
 * no patients), a logistic model with 12 parameters (call_back × age_band + sex and three
 * numeric covariates), against base R reading the same file with read.csv(colClasses = …)
 * and fitting glm() + vcov() in the same run. Target: the whole command (npm, Node start,
 * reading, analysis, JSON out) ≤ 0.25 × R's read.csv + glm + vcov (R's own start not
 * counted), peak resident memory ≤ 400 MB (GNU time's maximum resident set size). On a
 * file this large the command reads the file in two parts on two threads
 * (src/features/runs/twoThreadEngineInput.ts); part 1 below times the reader on one.
 *
 * It also times the CSV reading alone in this process: the upload reader (csvReader.ts +
 * columnAccumulator.ts, all 12 columns to typed columns) against the command's former
 * reader (csv-parse, then typing; bench/support/formerCsvReader.ts) and csv-parse's
 * parse alone (records of strings).
 *
 * The machine is shared: besides wall-clock times it prints CPU times (user + system, of
 * npm and the command's process; R's own), which other load disturbs less.
 *
 * Run on its own with `npx tsx bench/cli.bench.ts [rows]`; `npm run bench -- cli`.
 */
import { execFileSync, spawnSync } from 'node:child_process';
import { createReadStream, existsSync, writeFileSync } from 'node:fs';
import { mkdtemp, readFile, rm, stat } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { parse } from 'csv-parse/sync';
import { ColumnSet } from '@/features/extracts/columnAccumulator';
import { readCsv } from '@/features/extracts/csvReader';
import { readCsvFile as readWithFormerReader } from './support/formerCsvReader';
import { generateSyntheticExtract } from './support/syntheticExtract';

const rows = Number(process.argv.slice(2).find((a) => /^\d+$/.test(a)) ?? 1_000_000);
const repository = fileURLToPath(new URL('..', import.meta.url));
const repeats = 3;

const spec = {
  outcome: { column: 'readmitted_30d', type: 'binary' },
  exposure: { column: 'call_back', reference: '0' },
  modifier: { column: 'age_band', type: 'categorical', reference: '18-44' },
  covariates: [
    { column: 'sex', type: 'categorical' },
    { column: 'comorbidity_score', type: 'continuous' },
    { column: 'frailty_score', type: 'continuous' },
    { column: 'length_of_stay_days', type: 'continuous' },
  ],
  model: 'logistic',
  ci: { level: 0.95, method: 'delta' },
};
const rFormula = 'readmitted_30d ~ factor(call_back) * age_band + sex + comorbidity_score + frailty_score + length_of_stay_days';
const rClasses = "c('integer', 'integer', 'factor', 'factor', 'factor', 'integer', 'integer', 'numeric', 'numeric', 'integer', 'numeric', 'factor')";

function median(values: number[]): number {
  const sorted = [...values].sort((a, b) => a - b);
  return sorted[Math.floor(sorted.length / 2)];
}

function hasRscript(): boolean {
  try {
    execFileSync('Rscript', ['--version'], { stdio: 'ignore' });
    return true;
  } catch {
    return false;
  }
}

/** One run of the command through npm, timed from spawn to exit; peak RSS from GNU time when present. */
function runCommand(data: string, specPath: string): { seconds: number; cpuSeconds: number | null; peakMb: number | null; stdout: string } {
  const withTime = existsSync('/usr/bin/time');
  const npmArgs = ['run', '-s', 'engine', '--', '--data', data, '--spec', specPath];
  const start = performance.now();
  const result = withTime
    ? spawnSync('/usr/bin/time', ['-f', 'PEAK_KB %M CPU %U %S', 'npm', ...npmArgs], { cwd: repository, encoding: 'utf8', maxBuffer: 1 << 26 })
    : spawnSync('npm', npmArgs, { cwd: repository, encoding: 'utf8', maxBuffer: 1 << 26 });
  const seconds = (performance.now() - start) / 1000;
  if (result.status !== 0) throw new Error(`engine command failed: ${result.stderr}`);
  const measured = /PEAK_KB (\d+) CPU ([\d.]+) ([\d.]+)/.exec(result.stderr);
  return {
    seconds,
    cpuSeconds: measured ? Number(measured[2]) + Number(measured[3]) : null,
    peakMb: measured ? Number(measured[1]) / 1024 : null,
    stdout: result.stdout,
  };
}

const dir = await mkdtemp(join(tmpdir(), 'crossgrain-cli-bench-'));
try {
  const data = join(dir, 'extract.csv');
  const specPath = join(dir, 'spec.json');
  await generateSyntheticExtract(data, rows);
  writeFileSync(specPath, JSON.stringify(spec));
  const { size } = await stat(data);
  process.stdout.write(`(file: ${rows.toLocaleString('en-US')} rows × 12 columns, ${(size / 1e6).toFixed(1)} MB; ${repeats} runs of each, median reported)\n`);

  // ---- 1. reading alone: the upload reader against csv-parse ------------------------------
  const readerTimes: number[] = [];
  const csvParseTimes: number[] = [];
  const formerTimes: number[] = [];
  for (let repeat = 0; repeat < repeats; repeat++) {
    let start = performance.now();
    const columns = new ColumnSet({ expectedBytes: size });
    await readCsv(createReadStream(data, { highWaterMark: 1 << 20 }), columns);
    if (columns.finish().length !== 12) throw new Error('expected 12 columns');
    readerTimes.push((performance.now() - start) / 1000);
    start = performance.now();
    const records = parse(await readFile(data, 'utf8'), { bom: true, skip_empty_lines: true }) as string[][];
    if (records.length !== rows + 1) throw new Error('csv-parse read a different number of records');
    csvParseTimes.push((performance.now() - start) / 1000);
    start = performance.now();
    const former = await readWithFormerReader(data);
    if (former.rowCount !== rows) throw new Error('the former reader read a different number of rows');
    formerTimes.push((performance.now() - start) / 1000);
  }
  const reader = median(readerTimes);
  const csvParse = median(csvParseTimes);
  const former = median(formerTimes);
  const list = (times: number[]) => times.map((t) => t.toFixed(2)).join(', ');
  process.stdout.write(
    `1. reading the file into typed columns: upload reader ${reader.toFixed(3)} s (${list(readerTimes)}); ` +
      `former reader (csv-parse + typing) ${former.toFixed(3)} s (${list(formerTimes)}): upload reader ${(former / reader).toFixed(1)} × faster; ` +
      `csv-parse's parse alone ${csvParse.toFixed(3)} s (${list(csvParseTimes)}): ${(csvParse / reader).toFixed(1)} ×\n`,
  );

  // ---- 2. the whole command against R -----------------------------------------------------
  const warm = runCommand(data, specPath); // builds the bundle if it is stale; not counted
  const result = JSON.parse(warm.stdout) as { n: number };
  if (result.n !== rows) throw new Error(`the command analysed ${result.n} rows, not ${rows}`);
  const runs = Array.from({ length: repeats }, () => runCommand(data, specPath));
  const commandSeconds = median(runs.map((r) => r.seconds));
  const peaks = runs.map((r) => r.peakMb).filter((p): p is number => p !== null);
  let rSeconds: number | null = null;
  let rTimes: number[] = [];
  let rCpuTimes: number[] = [];
  if (hasRscript()) {
    const script = `times <- replicate(${repeats}, system.time({
  d <- read.csv("${data}", colClasses = ${rClasses})
  fit <- glm(${rFormula}, family = binomial, data = d)
  v <- vcov(fit)
})[c("elapsed", "user.self", "sys.self")]); cat(times[1, ], times[2, ] + times[3, ], sep = "\\n")`;
    const measured = execFileSync('Rscript', ['-e', script], { encoding: 'utf8' }).trim().split(/\s+/).map(Number);
    rTimes = measured.slice(0, repeats);
    rCpuTimes = measured.slice(repeats);
    rSeconds = median(rTimes);
  }
  process.stdout.write(`2. npm run -s engine -- --data F --spec S: ${commandSeconds.toFixed(3)} s (${list(runs.map((r) => r.seconds))})`);
  if (rSeconds === null) process.stdout.write(', R not installed: no ratio\n');
  else {
    const ratio = commandSeconds / rSeconds;
    process.stdout.write(
      `; R read.csv(colClasses) + glm + vcov ${rSeconds.toFixed(3)} s (${list(rTimes)}): ` +
        `ratio ${ratio.toFixed(3)} (target ≤ 0.25): ${ratio <= 0.25 ? 'meets target' : 'MISSES target'}\n`,
    );
  }
  const cpu = runs.map((r) => r.cpuSeconds).filter((c): c is number => c !== null);
  if (cpu.length > 0 && rCpuTimes.length > 0) {
    process.stdout.write(
      `   CPU time: command ${median(cpu).toFixed(3)} s (${list(cpu)}), R ${median(rCpuTimes).toFixed(3)} s (${list(rCpuTimes)}): ` +
        `ratio ${(median(cpu) / median(rCpuTimes)).toFixed(3)} (the command's two threads both count)\n`,
    );
  }
  if (peaks.length > 0) {
    const peak = Math.max(...peaks);
    process.stdout.write(`   peak resident memory of the command ${peak.toFixed(0)} MB (target ≤ 400 MB): ${peak <= 400 ? 'meets target' : 'MISSES target'}\n`);
  } else process.stdout.write('   /usr/bin/time not installed: no peak memory\n');
} finally {
  await rm(dir, { recursive: true, force: true });
}
