/**
 * A separate process that stores an extract version and stops part-way, for the test
 * that kills it mid-ingest. Usage: tsx ingestChild.ts <userId> <initiativeId> <extractId> <versionId>
 * It prints "paused" after the first column is written (inside the open transaction)
 * and then waits to be killed.
 */
import { randomUUID } from 'node:crypto';
import { sequelize, withIdentity } from '@/lib/server/db';
import { readExtractColumns, reviewExtractColumns } from '@/features/extracts/extracts';
import { storeVersion } from '@/features/extracts/extracts.server';

const [userId, initiativeId, extractId, versionId] = process.argv.slice(2);
const csv = ['a,b,c', ...Array.from({ length: 200 }, (_, i) => `${i % 2},${i % 7},${(i * 3) % 11}`)].join('\n');

await withIdentity(userId, (t) =>
  sequelize.query(
    `INSERT INTO extract_intakes (id, extract_id, initiative_id, name, new_extract, uploaded_by, status, stage)
     VALUES (:versionId, :extractId, :initiativeId, 'Killed mid-ingest', true, :userId, 'processing', 'storing')`,
    { replacements: { versionId, extractId, initiativeId, userId }, transaction: t },
  ),
);
const read = await readExtractColumns([Buffer.from(csv)]);
const review = reviewExtractColumns(read.columns);
void randomUUID;
await withIdentity(userId, (transaction) =>
  storeVersion(sequelize, transaction, { id: userId, clientAddress: 'test' }, { initiativeId, extractId, versionId, name: 'Killed mid-ingest', newExtract: true },
    read, review.profile, review.findings, {
      afterColumn: async () => {
        process.stdout.write('paused\n');
        await new Promise(() => {});
      },
    }),
);
