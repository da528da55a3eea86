/**
 * One ingest in a fresh process, so that its peak memory is its own: reads the CSV file
 * as a stream, screens and profiles it, and stores it in one transaction, as the upload
 * endpoint does. Prints one JSON line with the timings and peak resident memory.
 * Usage: tsx bench/support/ingestOnce.ts FILE USER_ID INITIATIVE_ID
 */
import { randomUUID } from 'node:crypto';
import { createReadStream } from 'node:fs';
import { readExtractColumns, reviewExtractColumns } from '@/features/extracts/extracts';
import { storeVersion } from '@/features/extracts/extracts.server';
import { sequelize, withIdentity } from '@/lib/server/db';

const [file, userId, initiativeId] = process.argv.slice(2);
const start = { initiativeId, extractId: randomUUID(), versionId: randomUUID(), name: 'Benchmark extract (synthetic)', newExtract: true };
await withIdentity(userId, (t) =>
  sequelize.query(
    `INSERT INTO extract_intakes (id, extract_id, initiative_id, name, new_extract, uploaded_by, status, stage)
     VALUES (:versionId, :extractId, :initiativeId, :name, true, :userId, 'processing', 'receiving')`,
    { replacements: { ...start, userId }, transaction: t },
  ),
);
const t0 = performance.now();
const read = await readExtractColumns(createReadStream(file, { highWaterMark: 1 << 20 }));
const t1 = performance.now();
const review = reviewExtractColumns(read.columns);
const t2 = performance.now();
if (review.refused) throw new Error('the benchmark file was refused by the screen');
await withIdentity(userId, (t) => storeVersion(sequelize, t, { id: userId, clientAddress: 'bench' }, start, read, review.profile, review.findings));
const t3 = performance.now();
console.log(JSON.stringify({
  versionId: start.versionId,
  rows: read.read.recordCount,
  readSeconds: (t1 - t0) / 1000,
  reviewSeconds: (t2 - t1) / 1000,
  storeSeconds: (t3 - t2) / 1000,
  totalSeconds: (t3 - t0) / 1000,
  peakRssMb: process.resourceUsage().maxRSS / 1024,
}));
await sequelize.close();
