/**
 * Engine benchmark (issue 4): three figures on seeded synthetic data (invented, with
 * effects set by the generator), each timed against base R on the same data in the same
 * run when Rscript is installed.
 *
 * 1. Logistic fit, 12 parameters (binary intervention × 4-level modifier + 4 covariates,
 *    two of them 0/1), 1,000,000 rows, from columns in memory (coding, design and IRLS fit
 *    on both cores through the pass pool, which is started once per process and timed
 *    separately; R: glm()). Target ≤ 0.15 × glm() time and whole-process peak memory
 *    ≤ 400 MB. The single-thread time is printed too.
 * 2. 2,000 percentile-bootstrap replicates of RERI on 100,000 rows with two worker
 *    threads; per replicate ≤ 0.1 × one glm() refit of the same model on the same data.
 * 3. Linear model with a continuous × continuous product, 1,000,000 rows (the engine's
 *    least-squares fit on the design 1, x, z, x·z built from the columns, classical errors
 *    as lm() gives; R: lm(y ~ x * z)). Target ≤ 0.5 × lm() time.
 */
import { execFileSync } from 'node:child_process';
import { closeSync, mkdtempSync, openSync, writeSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { buildAnalysisFrame } from '@/engine/design/analysisFrame.js';
import { buildDesignMatrix, type DesignMatrix } from '@/engine/design/designMatrix.js';
import { fitModel } from '@/engine/fit/fitModel.js';
import { fitOrdinaryLeastSquares } from '@/engine/fit/ordinaryLeastSquares.js';
import { runAnalysis } from '@/engine/index.js';
import { Xoshiro128StarStar } from '@/engine/random/xoshiro128StarStar.js';
import { passPool } from '@/engine/threads/passPool.js';
import type { AnalysisSpec, EngineData } from '@/engine/types.js';

const folder = mkdtempSync(join(tmpdir(), 'engine-bench-'));

function hasRscript(): boolean {
  try {
    execFileSync('Rscript', ['--version'], { stdio: 'ignore' });
    return true;
  } catch {
    return false;
  }
}
const withR = hasRscript();

/** Seeded cohort: a ~ Bernoulli(½), m uniform on 4 levels, c1, c3 ~ N(0,1), c2, c4 ~ Bernoulli. */
function logisticCohort(n: number, seed: number): EngineData {
  const g = Xoshiro128StarStar.forStream(seed, 0);
  const a = new Float64Array(n), m = new Int32Array(n), c1 = new Float64Array(n), c2 = new Float64Array(n);
  const c3 = new Float64Array(n), c4 = new Float64Array(n), y = new Float64Array(n);
  const modifier = [0, 0.2, 0.4, 0.6];
  const product = [0, 0.1, 0.25, -0.2];
  for (let i = 0; i < n; i++) {
    a[i] = g.nextDouble() < 0.5 ? 1 : 0;
    m[i] = g.nextBelow(4);
    c1[i] = g.nextNormal();
    c2[i] = g.nextDouble() < 0.3 ? 1 : 0;
    c3[i] = g.nextNormal();
    c4[i] = g.nextDouble() < 0.5 ? 1 : 0;
    const eta = -2 + 0.4 * a[i] + modifier[m[i]] + product[m[i]] * a[i] + 0.3 * c1[i] + 0.2 * c2[i] - 0.1 * c3[i] + 0.15 * c4[i];
    y[i] = g.nextDouble() < 1 / (1 + Math.exp(-eta)) ? 1 : 0;
  }
  return {
    rowCount: n,
    columns: {
      y: { kind: 'numeric', values: y }, a: { kind: 'numeric', values: a },
      m: { kind: 'categorical', codes: m, levels: ['m0', 'm1', 'm2', 'm3'] },
      c1: { kind: 'numeric', values: c1 }, c2: { kind: 'numeric', values: c2 }, c3: { kind: 'numeric', values: c3 }, c4: { kind: 'numeric', values: c4 },
    },
  };
}

const logisticSpec: AnalysisSpec = {
  outcome: { column: 'y', type: 'binary' },
  exposure: { column: 'a', reference: '0' },
  modifier: { column: 'm', type: 'categorical', reference: 'm0' },
  covariates: ['c1', 'c2', 'c3', 'c4'].map((column) => ({ column, type: 'continuous' as const })),
  model: 'logistic',
  ci: { level: 0.95, method: 'delta' },
};

/** Writes columns to CSV in chunks (no giant string). */
function writeCsv(path: string, data: EngineData): void {
  const names = Object.keys(data.columns);
  const file = openSync(path, 'w');
  writeSync(file, `${names.join(',')}\n`);
  let chunk: string[] = [];
  for (let i = 0; i < data.rowCount; i++) {
    chunk.push(names.map((name) => {
      const column = data.columns[name];
      return column.kind === 'numeric' ? String(column.values[i]) : column.levels[column.codes[i]];
    }).join(','));
    if (chunk.length === 50_000) {
      writeSync(file, `${chunk.join('\n')}\n`);
      chunk = [];
    }
  }
  if (chunk.length > 0) writeSync(file, `${chunk.join('\n')}\n`);
  closeSync(file);
}

/** Seconds R takes for `expression` (median of `repeats`), after reading the CSV untimed. */
function timeR(csv: string, prepare: string, expression: string, repeats: number): number {
  const script = `d <- read.csv("${csv}"); ${prepare}
times <- replicate(${repeats}, system.time(${expression})[["elapsed"]]); cat(median(times))`;
  return Number(execFileSync('Rscript', ['-e', script], { encoding: 'utf8' }).trim());
}

function median(values: number[]): number {
  const sorted = [...values].sort((a, b) => a - b);
  return sorted[Math.floor(sorted.length / 2)];
}

function report(label: string, engineSeconds: number, rSeconds: number | null, target: number): void {
  const ratio = rSeconds === null ? null : engineSeconds / rSeconds;
  const verdict = ratio === null ? 'R not installed: no ratio' : ratio <= target ? 'meets target' : 'MISSES target';
  process.stdout.write(
    `${label}\n  engine ${engineSeconds.toFixed(3)} s` +
      (rSeconds === null ? '' : `, R ${rSeconds.toFixed(3)} s, ratio ${ratio!.toFixed(3)} (target ≤ ${target}): ${verdict}`) + '\n',
  );
}

const poolStart = performance.now();
const pool = await passPool(1);
process.stdout.write(`(pass pool with one helper thread started in ${((performance.now() - poolStart) / 1000).toFixed(3)} s, once per process)\n`);

// ---- 1. logistic fit, 12 parameters, 1,000,000 rows -----------------------------------------
{
  const data = logisticCohort(1_000_000, 2026);
  const times: number[] = [];
  const singleTimes: number[] = [];
  let iterations = 0;
  for (let repeat = 0; repeat < 3; repeat++) {
    for (const parallel of [pool, null]) {
      const start = performance.now();
      const frame = buildAnalysisFrame(data, logisticSpec);
      const design = buildDesignMatrix(frame, { includeProducts: true, centre: 0, shared: parallel !== null });
      const fit = fitModel(design, frame.outcome, 'logistic', { parallel });
      (parallel ? times : singleTimes).push((performance.now() - start) / 1000);
      iterations = fit.iterations;
      if (design.columns !== 12) throw new Error(`expected 12 parameters, got ${design.columns}`);
    }
  }
  const peakMb = process.resourceUsage().maxRSS / 1024;
  let rSeconds: number | null = null;
  if (withR) {
    const csv = join(folder, 'logistic.csv');
    writeCsv(csv, data);
    rSeconds = timeR(csv, 'd$m <- factor(d$m)', 'glm(y ~ a * m + c1 + c2 + c3 + c4, family = binomial, data = d)', 1);
  }
  process.stdout.write(`(IRLS iterations ${iterations}; engine runs on 2 threads ${times.map((t) => t.toFixed(3)).join(', ')} s, median reported; on 1 thread ${singleTimes.map((t) => t.toFixed(3)).join(', ')} s)\n`);
  report('1. logistic fit, 12 parameters, 1,000,000 rows (coding + design + fit)', median(times), rSeconds, 0.15);
  process.stdout.write(`  peak memory of the process ${peakMb.toFixed(0)} MB (target ≤ 400 MB): ${peakMb <= 400 ? 'meets target' : 'MISSES target'}\n`);
}

// ---- 2. bootstrap of RERI, 2,000 replicates, 100,000 rows, two threads ---------------------
{
  const data = logisticCohort(100_000, 2027);
  const replicates = 2000;
  const start = performance.now();
  const result = await runAnalysis(data, { ...logisticSpec, ci: { level: 0.95, method: 'bootstrap', replicates, seed: 1 } }, { threads: 2 });
  const total = (performance.now() - start) / 1000;
  const perReplicate = total / replicates;
  let rSeconds: number | null = null;
  if (withR) {
    const csv = join(folder, 'bootstrap.csv');
    writeCsv(csv, data);
    rSeconds = timeR(csv, 'd$m <- factor(d$m)', 'glm(y ~ a * m + c1 + c2 + c3 + c4, family = binomial, data = d)', 5);
  }
  process.stdout.write(`(whole analysis with ${replicates} replicates: ${total.toFixed(2)} s; ${result.bootstrap!.failed} failed refits; RERI ${result.interaction.additive[0].reri!.estimate!.toFixed(3)} [${result.interaction.additive[0].reri!.lower!.toFixed(3)}, ${result.interaction.additive[0].reri!.upper!.toFixed(3)}])\n`);
  report('2. bootstrap of RERI, per replicate, 100,000 rows, 2 threads (vs one glm() refit)', perReplicate, rSeconds, 0.1);
}

// ---- 3. linear model with a continuous × continuous product, 1,000,000 rows ---------------------
{
  const n = 1_000_000;
  const g = Xoshiro128StarStar.forStream(2028, 0);
  const x = new Float64Array(n), z = new Float64Array(n), y = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    x[i] = g.nextNormal();
    z[i] = 3 + g.nextNormal();
    y[i] = 1 + 0.5 * x[i] + 0.3 * z[i] + 0.2 * x[i] * z[i] + g.nextNormal();
  }
  const times: number[] = [];
  const singleTimes: number[] = [];
  for (let repeat = 0; repeat < 6; repeat++) {
    const threaded = repeat % 2 === 0;
    const start = performance.now();
    // Design: one cell (intercept) and free terms x, z, x·z, built from the columns.
    const free = threaded ? new Float64Array(new SharedArrayBuffer(n * 3 * 8)) : new Float64Array(n * 3);
    for (let i = 0; i < n; i++) {
      free[3 * i] = x[i];
      free[3 * i + 1] = z[i];
      free[3 * i + 2] = x[i] * z[i];
    }
    const design: DesignMatrix = {
      rows: n, columns: 4,
      terms: ['(Intercept)', 'x', 'z', 'x × z'].map((name) => ({ name, role: 'covariate' as const, column: null, level: null })),
      cellCount: 1, cellOfRow: threaded ? new Int32Array(new SharedArrayBuffer(n * 4)) : new Int32Array(n), cellTerms: Int32Array.of(0), cellValues: Float64Array.of(1),
      freeTerms: Int32Array.of(1, 2, 3), free, exposureIndex: 1, modifierIndices: [2], productIndices: [3], covariateIndices: [], centre: 0,
    };
    if (threaded) {
      const context = pool.attach(design, y);
      fitOrdinaryLeastSquares({ design: context.design, y: context.y, computeHC3: false, parallel: context });
    } else {
      fitOrdinaryLeastSquares({ design, y, computeHC3: false });
    }
    (threaded ? times : singleTimes).push((performance.now() - start) / 1000);
  }
  let rSeconds: number | null = null;
  if (withR) {
    const csv = join(folder, 'linear.csv');
    writeCsv(csv, { rowCount: n, columns: { y: { kind: 'numeric', values: y }, x: { kind: 'numeric', values: x }, z: { kind: 'numeric', values: z } } });
    rSeconds = timeR(csv, '', 'lm(y ~ x * z, data = d)', 3);
  }
  process.stdout.write(`(engine runs on 2 threads ${times.map((t) => t.toFixed(3)).join(', ')} s, median reported; on 1 thread ${singleTimes.map((t) => t.toFixed(3)).join(', ')} s; classical errors, like lm(); HC3 adds one pass)\n`);
  report('3. linear model, continuous × continuous product, 1,000,000 rows', median(times), rSeconds, 0.5);
}
