/**
 * The raw file of each stored version, kept in PostgreSQL (`extract_files`, chunks of
 * {@link RAW_CHUNK_BYTES}) rather than on the disk of the server that received it, so that
 * every app server can serve every request. Written in the transaction that stores the
 * version (a refused or failed upload leaves no chunk), read back chunk by chunk (never
 * held whole), under the row-level security of the extract (policies/rls/014_extract_files.sql).
 */
import { open } from 'node:fs/promises';
import { QueryTypes, type Sequelize, type Transaction } from 'sequelize';
import { sequelize as appSequelize, withIdentity } from '@/lib/server/db';

/** Bytes per stored chunk (the migration that moved the files in uses the same). */
export const RAW_CHUNK_BYTES = 1024 * 1024;

/** Copies the file at `file` into the database as the raw file of a version, in the caller's transaction; `onChunks` is called every 32 chunks. */
export async function storeRawFile(
  db: Sequelize,
  transaction: Transaction,
  version: { versionId: string; initiativeId: string },
  file: string,
  onChunks: () => void = () => undefined,
): Promise<number> {
  const handle = await open(file, 'r');
  const buffer = Buffer.alloc(RAW_CHUNK_BYTES);
  let chunk = 0;
  try {
    for (;;) {
      const { bytesRead } = await handle.read(buffer, 0, RAW_CHUNK_BYTES, null);
      if (bytesRead === 0 && chunk > 0) break;
      // Bulk bytes, bound as they are (raw SQL on the caller's connection).
      await db.query('INSERT INTO extract_files (version_id, initiative_id, chunk, bytes) VALUES ($versionId, $initiativeId, $chunk, $bytes)', {
        bind: { versionId: version.versionId, initiativeId: version.initiativeId, chunk, bytes: buffer.subarray(0, bytesRead) },
        transaction,
      });
      chunk += 1;
      if (chunk % 32 === 0) onChunks();
      if (bytesRead < RAW_CHUNK_BYTES) break;
    }
  } finally {
    await handle.close();
  }
  return chunk;
}

/** How many chunks a version's raw file has (0 when it has none, or it is not visible). */
export async function rawFileChunkCount(transaction: Transaction, versionId: string): Promise<number> {
  const [row] = await appSequelize.query<{ chunks: number }>('SELECT count(*)::int AS chunks FROM extract_files WHERE version_id = :versionId', {
    replacements: { versionId }, type: QueryTypes.SELECT, transaction,
  });
  return row?.chunks ?? 0;
}

/**
 * The raw file of a version as a byte stream, one chunk per read, each read in a short
 * transaction of its own under `userId`'s identity (a version never changes, so the
 * chunks belong together). Fails when a chunk is missing.
 */
export function rawFileStream(userId: string, versionId: string, chunks: number): ReadableStream<Uint8Array> {
  let next = 0;
  return new ReadableStream<Uint8Array>({
    async pull(controller) {
      if (next >= chunks) {
        controller.close();
        return;
      }
      const chunk = next++;
      const rows = await withIdentity(userId, (transaction) =>
        appSequelize.query<{ bytes: Buffer }>('SELECT bytes FROM extract_files WHERE version_id = :versionId AND chunk = :chunk', {
          replacements: { versionId, chunk }, type: QueryTypes.SELECT, transaction,
        }),
      );
      if (rows.length !== 1) {
        controller.error(new Error(`Chunk ${chunk} of the raw file of version ${versionId} is missing.`));
        return;
      }
      controller.enqueue(new Uint8Array(rows[0].bytes));
    },
  }, { highWaterMark: 1 });
}
