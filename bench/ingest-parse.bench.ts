/**
 * Ingest benchmark: generates a seeded 1,000,000-row, 12-column CSV (about 45 MB) in a
 * temporary file, then streams it through the extract pipeline (parse, identifier screen,
 * profile, encode) and prints the time of each stage and the peak resident memory.
 *
 * Run on its own with `npx tsx bench/ingest-parse.bench.ts [rows] [--quoted]`; bench/run.ts
 * runs it with the others. `--quoted` writes every text field in quotes with CRLF line ends
 * (the slower path of the parser). The file is generated before timing starts and deleted
 * at the end.
 */
import { createReadStream, createWriteStream } from 'node:fs';
import { mkdtemp, rm, stat } from 'node:fs/promises';
import { once } from 'node:events';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { ingestExtract } from '../src/features/extracts/extracts';
import { SeededRandom } from '../src/features/extracts/seededRandom';

const args = process.argv.slice(2);
const quoted = args.includes('--quoted');
const rows = Number(args.find((a) => /^\d+$/.test(a)) ?? 1_000_000);
const SEED = 20260501;

const HEADER = 'readmitted_30d,call_back,age_band,sex,site,comorbidity_score,prior_admissions,frailty_score,length_of_stay_days,systolic_bp,creatinine,ward';
const AGE_BANDS = ['18-44', '45-64', '65-79', '80+'];
const SITES = ['TVG', 'ESH', 'RMH'];

async function generate(path: string, count: number): Promise<void> {
  const random = new SeededRandom(SEED);
  const out = createWriteStream(path, { highWaterMark: 1 << 20 });
  const text = (value: string): string => (quoted ? `"${value}"` : value);
  const eol = quoted ? '\r\n' : '\n';
  out.write(`${HEADER}${eol}`);
  let batch: string[] = [];
  for (let i = 0; i < count; i++) {
    const band = random.pick([0.3, 0.3, 0.25, 0.15]);
    const callBack = random.bernoulli(0.5) ? 1 : 0;
    const readmitted = random.bernoulli(0.08 + 0.04 * band - 0.02 * callBack * band) ? 1 : 0;
    const frailty = Math.min(9, Math.max(1, 2 + band + random.normal())).toFixed(1);
    const los = Math.max(0.5, 3 + 2 * random.normal() + band).toFixed(1);
    const creatinine = Math.max(0.3, 1 + 0.3 * random.normal()).toFixed(2);
    const row = [
      readmitted,
      callBack,
      text(AGE_BANDS[band]),
      text(random.bernoulli(0.52) ? 'F' : 'M'),
      text(SITES[random.integerBelow(3)]),
      random.poisson(2 + band),
      random.poisson(0.6),
      frailty,
      los,
      Math.round(125 + 15 * random.normal()),
      creatinine,
      text(`Ward-${random.integerBelow(12) + 1}`),
    ];
    batch.push(row.join(','));
    if (batch.length === 10_000) {
      if (!out.write(`${batch.join(eol)}${eol}`)) await once(out, 'drain');
      batch = [];
    }
  }
  if (batch.length > 0) out.write(`${batch.join(eol)}${eol}`);
  out.end();
  await once(out, 'finish');
}

const dir = await mkdtemp(join(tmpdir(), 'crossgrain-ingest-bench-'));
const path = join(dir, 'extract.csv');
try {
  await generate(path, rows);
  const { size } = await stat(path);
  if (global.gc) global.gc();
  const rssBefore = process.memoryUsage().rss;
  let sampledPeak = rssBefore;
  // The sampler runs between chunks; the synchronous screen and profile are sampled after.
  const sampler = setInterval(() => {
    sampledPeak = Math.max(sampledPeak, process.memoryUsage().rss);
  }, 10);
  const marks: Record<string, number> = {};
  const start = performance.now();
  const result = await ingestExtract(createReadStream(path, { highWaterMark: 1 << 20 }), {
    expectedBytes: size,
    onProgress: ({ stage }) => {
      marks[stage] ??= performance.now();
    },
  });
  const end = performance.now();
  clearInterval(sampler);
  sampledPeak = Math.max(sampledPeak, process.memoryUsage().rss);
  // maxRSS is the process's high-water mark over the whole run, generation included.
  const processPeak = process.resourceUsage().maxRSS * 1024;

  const readMs = (marks.screening ?? end) - start;
  const screenProfileMs = (marks.storing ?? end) - (marks.screening ?? start);
  const encodeMs = end - (marks.storing ?? end);
  const mb = (bytes: number): string => (bytes / 1e6).toFixed(1);
  console.log(`ingest-parse: ${result.read.recordCount.toLocaleString('en-US')} rows x ${result.columns.length} columns, ${mb(size)} MB${quoted ? ', quoted text, CRLF' : ''}`);
  console.log(`  parse+accumulate   ${readMs.toFixed(0)} ms  (${(size / 1e6 / (readMs / 1000)).toFixed(0)} MB/s)`);
  console.log(`  screen+profile     ${screenProfileMs.toFixed(0)} ms`);
  console.log(`  encode             ${encodeMs.toFixed(0)} ms`);
  console.log(`  total              ${(end - start).toFixed(0)} ms  (budget about 2500 ms)`);
  console.log(`  RSS                before ${mb(rssBefore)} MB, peak during ingest ${mb(sampledPeak)} MB, process peak ${mb(processPeak)} MB (budget 500 MB)`);
  console.log(`  findings           ${result.findings.length}; types ${result.profile.map((p) => `${p.name}=${p.inferredType}`).join(', ')}`);
  console.log(`  sha256             ${result.read.sha256}`);
} finally {
  await rm(dir, { recursive: true, force: true });
}
