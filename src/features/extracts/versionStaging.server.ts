/**
 * Storing a large upload without holding it: its columns are screened, profiled and
 * staged a group at a time inside the storing transaction, in temporary tables of that
 * transaction, in slices of {@link SLICE_ROWS} rows, so that the server holds one group of
 * columns and one slice at a time. Once every column has passed the screen, the version is
 * written (its profile and findings are known only then), its columns are assembled from
 * the slices by PostgreSQL (`string_agg`, in the column format of columnStore.ts) and the
 * raw file is copied in (rawFiles.server.ts). A refusal, a cancel or an error rolls the
 * transaction back: the temporary tables go with it and nothing is left.
 */
import type { Sequelize, Transaction } from 'sequelize';
import { ExtractIntake } from '../../../db/models';
import type { ColumnData } from './columnAccumulator';
import { encodeColumn } from './columnStore';
import { closeVersion, intakeStillProcessing, openVersion, type IntakeStart, type StoredKeep, type Uploader } from './extracts.server';
import { mergeReviews } from './columnPasses';
import { env } from '@/lib/server/env';
import { reviewExtractColumns, type ReadExtract, type ReviewedExtract } from './extracts';
import { storeRawFile } from './rawFiles.server';

/** Rows per staged slice: 4 MiB of numbers, 2 MiB of codes; a multiple of 8, so the missing bitmap splits on bytes. */
export const SLICE_ROWS = 1 << 19;

/** Creates the transaction's staging tables (dropped at its end, whatever the outcome). */
export async function createStaging(db: Sequelize, transaction: Transaction): Promise<void> {
  // Temporary tables of this transaction only: raw SQL (no model, no row-level security needed).
  await db.query(
    `CREATE TEMPORARY TABLE staged_columns (position integer PRIMARY KEY, name text NOT NULL, storage text NOT NULL,
       row_count integer NOT NULL, missing_count integer NOT NULL, levels text[]) ON COMMIT DROP`,
    { transaction },
  );
  await db.query(
    `CREATE TEMPORARY TABLE staged_slices (position integer NOT NULL, slice integer NOT NULL, values bytea NOT NULL,
       missing bytea NOT NULL, PRIMARY KEY (position, slice)) ON COMMIT DROP`,
    { transaction },
  );
}

/** Stages one finished column in slices; returns false for a column that cannot be stored (an overflowed dictionary). */
export async function stageColumn(db: Sequelize, transaction: Transaction, column: ColumnData): Promise<boolean> {
  if (column.kind === 'text' && column.levelsOverflowed) return false;
  const encoded = encodeColumn(column);
  const width = encoded.storage === 'numeric' ? 8 : 4;
  await db.query(
    `INSERT INTO staged_columns (position, name, storage, row_count, missing_count, levels)
     VALUES ($position, $name, $storage, $rows, $missingCount, $levels)`,
    {
      bind: {
        position: encoded.position, name: encoded.name, storage: encoded.storage, rows: encoded.rowCount,
        missingCount: encoded.missingCount, levels: encoded.levels,
      },
      transaction,
    },
  );
  for (let slice = 0, row = 0; slice === 0 || row < encoded.rowCount; slice += 1, row += SLICE_ROWS) {
    const end = Math.min(encoded.rowCount, row + SLICE_ROWS);
    await db.query('INSERT INTO staged_slices (position, slice, values, missing) VALUES ($position, $slice, $values, $missing)', {
      bind: {
        position: encoded.position, slice,
        values: encoded.values.subarray(row * width, end * width),
        missing: encoded.missing.subarray(row >> 3, (end + 7) >> 3),
      },
      transaction,
    });
  }
  return true;
}

/** The outcome of {@link storeStagedVersion}. */
export type StagedOutcome = { kind: 'stored' } | { kind: 'cancelled' } | { kind: 'refused'; review: ReviewedExtract };

/** Thrown inside the transaction so that a refusal rolls back what was staged; carries the review. */
class StagedRefusal extends Error {
  constructor(readonly review: ReviewedExtract) {
    super('refused by the identifier screen');
  }
}

/** Thrown inside the transaction when the upload was cancelled while it was being stored. */
class StagedCancel extends Error {}

/**
 * Screens, profiles and stores an upload whose columns arrive in groups, in the caller's
 * transaction (`run` opens it; a refusal rolls it back): the groups are screened and staged
 * one by one, then the version, its columns and its raw file are written together.
 */
export async function storeStagedVersion(
  db: Sequelize,
  run: <T>(work: (transaction: Transaction) => Promise<T>) => Promise<T>,
  uploader: Uploader,
  start: IntakeStart,
  read: ReadExtract,
  groups: AsyncIterable<ColumnData[]>,
  keeping: { keep: readonly string[]; reason: string },
  rawFile: string,
  heartbeat: () => void = () => undefined,
): Promise<StagedOutcome> {
  try {
    return await run(async (transaction): Promise<StagedOutcome> => {
      await createStaging(db, transaction);
      const reviews: ReviewedExtract[] = [];
      let staged = 0;
      for await (const group of groups) {
        const review = reviewExtractColumns(group, { regime: env.CROSSGRAIN_PRIVACY_REGIME }, keeping.keep);
        reviews.push(review);
        // After a refusal the remaining groups are still screened, for the full list of reasons, but not staged.
        if (!reviews.some((r) => r.refused)) {
          for (const column of group) if (await stageColumn(db, transaction, column)) staged += 1;
        }
        // A cancel between two groups stops the work (without waiting for a lock).
        const intake = await ExtractIntake.findByPk(start.versionId, { attributes: ['status'], transaction });
        if (intake?.status !== 'processing') throw new StagedCancel('cancelled while reading');
      }
      const review = mergeReviews(reviews, keeping.keep);
      if (review.refused) throw new StagedRefusal(review);
      const keptAt = new Date().toISOString();
      const kept: StoredKeep[] = review.kept.map((finding) => ({ ...finding, kept: { reason: keeping.reason, by: uploader.id, at: keptAt } }));
      // The intake is locked only at the end, so that progress can still be reported (its
      // heartbeat) and a cancel is not kept waiting while the columns and the file are written.
      const version = await openVersion(transaction, uploader, start, read, review.profile, [...review.findings, ...kept], staged, { checkIntake: false });
      if (version === null) return { kind: 'cancelled' };
      // Bulk column storage: the staged slices joined into one bytea per column by PostgreSQL (raw SQL).
      await db.query(
        `INSERT INTO extract_columns (version_id, initiative_id, position, name, storage, row_count, missing_count, values, missing, levels)
         SELECT $versionId, $initiativeId, c.position, c.name, c.storage, c.row_count, c.missing_count,
                coalesce((SELECT string_agg(s.values, ''::bytea ORDER BY s.slice) FROM staged_slices s WHERE s.position = c.position), ''::bytea),
                coalesce((SELECT string_agg(s.missing, ''::bytea ORDER BY s.slice) FROM staged_slices s WHERE s.position = c.position), ''::bytea),
                c.levels
           FROM staged_columns c ORDER BY c.position`,
        { bind: { versionId: start.versionId, initiativeId: start.initiativeId }, transaction },
      );
      heartbeat();
      await storeRawFile(db, transaction, { versionId: start.versionId, initiativeId: start.initiativeId }, rawFile, heartbeat);
      if (!(await intakeStillProcessing(transaction, start.versionId))) throw new StagedCancel('cancelled while storing');
      await closeVersion(transaction, uploader, start, read, version, staged, kept);
      return { kind: 'stored' };
    });
  } catch (error) {
    if (error instanceof StagedRefusal) return { kind: 'refused', review: error.review };
    if (error instanceof StagedCancel) return { kind: 'cancelled' };
    throw error;
  }
}
