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
import { createReadStream } from 'node:fs';
import { mkdtemp, rm, stat } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { ingestExtract } from '@/features/extracts/extracts';
import { generateSyntheticExtract } from './support/syntheticExtract';

const args = process.argv.slice(2);
const quoted = args.includes('--quoted');
const rows = Number(args.find((a) => /^\d+$/.test(a)) ?? 1_000_000);

const dir = await mkdtemp(join(tmpdir(), 'crossgrain-ingest-bench-'));
const path = join(dir, 'extract.csv');
try {
  await generateSyntheticExtract(path, rows, { quoted });
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
