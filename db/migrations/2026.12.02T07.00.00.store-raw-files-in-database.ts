import { existsSync, openSync, readSync, closeSync } from 'node:fs';
import path from 'node:path';
import { QueryTypes, type Sequelize } from 'sequelize';
import { env } from '@/lib/server/env';
import type { Migration } from '../migrate';

/** Bytes per stored chunk of a raw upload file (src/features/extracts/rawFiles.server.ts uses the same). */
const CHUNK_BYTES = 1024 * 1024;

/**
 * The raw upload file of each version moves from the receiving server's disk
 * (`CROSSGRAIN_DATA_DIR/extracts/<initiative>/<version>.csv`) into the database, in
 * chunks of 1 MiB, so that every app server can serve every request. Existing files are
 * copied in (chunk by chunk, never held whole); the files themselves are left where they
 * are, to be removed by hand once the migration has run. A version whose file is not on
 * this server's disk keeps no raw file (its columns, which analyses use, are unchanged).
 */
export const up: Migration = async ({ context }) => {
  await context.sql(`
    CREATE TABLE extract_files (
      version_id uuid NOT NULL REFERENCES extract_versions(id) ON DELETE CASCADE,
      initiative_id uuid NOT NULL REFERENCES initiatives(id),
      chunk integer NOT NULL CHECK (chunk >= 0),
      bytes bytea NOT NULL,
      PRIMARY KEY (version_id, chunk)
    );
  `);
  await copyRawFiles(context.sequelize, env.CROSSGRAIN_DATA_DIR);
  await context.applyPolicyFile('014_extract_files.sql');
};

export const down: Migration = async ({ context }) => {
  await context.sql('DROP TABLE IF EXISTS extract_files;');
};

/**
 * Copies each version's raw file from `dataDir/extracts/<initiative>/<version>.csv` into
 * extract_files, chunk by chunk, for the versions that have none yet; returns how many
 * versions were copied. Runs as the owner (before the policies apply, or bypassing them).
 */
export async function copyRawFiles(sequelize: Sequelize, dataDir: string): Promise<number> {
  const versions = await sequelize.query<{ id: string; initiative_id: string }>(
    `SELECT v.id, v.initiative_id FROM extract_versions v
      WHERE NOT EXISTS (SELECT 1 FROM extract_files f WHERE f.version_id = v.id) ORDER BY v.uploaded_at`,
    { type: QueryTypes.SELECT },
  );
  const buffer = Buffer.alloc(CHUNK_BYTES);
  let copied = 0;
  for (const version of versions) {
    const file = path.resolve(dataDir, 'extracts', version.initiative_id, `${version.id}.csv`);
    if (!existsSync(file)) continue;
    const descriptor = openSync(file, 'r');
    try {
      for (let chunk = 0; ; chunk += 1) {
        const length = readSync(descriptor, buffer, 0, CHUNK_BYTES, null);
        if (length === 0 && chunk > 0) break;
        await sequelize.query(
          'INSERT INTO extract_files (version_id, initiative_id, chunk, bytes) VALUES ($1, $2, $3, $4)',
          { bind: [version.id, version.initiative_id, chunk, Buffer.from(buffer.subarray(0, length))] },
        );
        if (length < CHUNK_BYTES) break;
      }
    } finally {
      closeSync(descriptor);
    }
    copied += 1;
  }
  return copied;
}
