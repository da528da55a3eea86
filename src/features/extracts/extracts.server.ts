/**
 * Extracts in the database: receiving an upload, storing a version in one transaction,
 * confirming its dictionary, archiving, reading status, previewing rows and loading
 * columns for the engine.
 *
 * An upload moves through an intake record (`extract_intakes`), which is committed on its
 * own so that progress and refusals are visible while nothing else exists yet. The
 * extract, its version and its columns are written together in one transaction at the
 * end: a refused, cancelled, failed or killed upload leaves none of them behind.
 */
import { randomUUID } from 'node:crypto';
import { createWriteStream, mkdirSync } from 'node:fs';
import { rename, rm } from 'node:fs/promises';
import path from 'node:path';
import { Readable } from 'node:stream';
import Busboy from 'busboy';
import { QueryTypes, type Sequelize, type Transaction } from 'sequelize';
import { sequelize as appSequelize, withIdentity } from '../../lib/server/db';
import { env } from '../../lib/server/env';
import { AppError, badRequest, conflict, notFound, unprocessable, unsupportedMediaType } from '../../lib/server/errors';
import { logger } from '../../lib/server/logger';
import { bodyChunks } from '../../lib/server/requestBody';
import { recordAudit } from '../audit/audit.server';
import { decodeCodes, decodeNumericValues, encodeColumn } from './columnStore';
import type { EngineData } from '../../engine';
import { isMissingToken } from '../../engine/design/missingValues';
import { levelsLeftIn, missingCodeKey, toEngineData, type StoredColumn } from './engineData';
import { ExtractRefusalError } from './extractRefusal';
import { readExtractColumns, reviewExtractColumns, type ReadExtract } from './extracts';
import type { ColumnProfile, DictionaryEntry, ProcessingStage } from './extracts.schema';

export { toEngineData, type StoredColumn } from './engineData';

/** The statement an analyst signs before a version becomes ready. */
export const ATTESTATION_STATEMENT =
  'I confirm that this extract is de-identified: it contains none of the 18 Safe Harbor identifiers ' +
  '(45 CFR 164.514(b)(2)), no dates finer than the year, no geography smaller than a state, and no ages ' +
  'over 89 except grouped as 90 or older, and that I am authorised to bring it into this initiative.';

/** An intake that has not reported for this long is treated as failed (its server stopped). */
export const INTAKE_STALE_MS = 120_000;

export interface Uploader {
  id: string;
  clientAddress: string;
}

const uploadDir = () => path.resolve(env.CROSSGRAIN_DATA_DIR, 'uploads');
const storedFile = (initiativeId: string, versionId: string) =>
  path.resolve(env.CROSSGRAIN_DATA_DIR, 'extracts', initiativeId, `${versionId}.csv`);

// ---------------------------------------------------------------------------------------
// Receiving
// ---------------------------------------------------------------------------------------

type ChunkSource = AsyncIterable<Uint8Array>;

/** The CSV bytes of a request: a raw `text/csv` body, or the first file of a multipart form. */
export function uploadSource(request: Request): ChunkSource {
  const type = (request.headers.get('content-type') ?? '').toLowerCase();
  if (!request.body) throw badRequest('The request has no body. Send the CSV file as the body.');
  if (type.startsWith('text/csv') || type.startsWith('application/csv') || type.startsWith('text/plain')) {
    return bodyChunks(request.body);
  }
  if (type.startsWith('multipart/form-data')) return multipartFile(request.headers, request.body);
  throw unsupportedMediaType('Send the extract as text/csv, or as a file in multipart/form-data.');
}

/** Streams the first file part of a multipart body; other fields are ignored. */
async function* multipartFile(requestHeaders: Headers, body: ReadableStream<Uint8Array>): AsyncGenerator<Uint8Array> {
  const headers = Object.fromEntries(requestHeaders);
  const parser = Busboy({ headers, limits: { files: 1, fileSize: env.CROSSGRAIN_UPLOAD_MAX_BYTES + 1 } });
  const input = Readable.from(bodyChunks(body), { objectMode: false });
  const file = new Promise<Readable>((resolve, reject) => {
    parser.on('file', (_name, stream) => resolve(stream));
    parser.on('error', reject);
    parser.on('close', () => reject(badRequest('The form holds no file. Attach the CSV file.')));
  });
  input.pipe(parser);
  const stream = await file;
  for await (const chunk of stream) yield chunk as Uint8Array;
}

interface IntakeStart {
  initiativeId: string;
  extractId: string;
  versionId: string;
  name: string;
  newExtract: boolean;
}

async function updateIntake(uploaderId: string, versionId: string, fields: Record<string, unknown>): Promise<void> {
  const sets = Object.keys(fields).map((key) => `${key} = :${key}`).join(', ');
  await withIdentity(uploaderId, (transaction) =>
    appSequelize.query(`UPDATE extract_intakes SET ${sets}, heartbeat_at = now() WHERE id = :versionId`, {
      replacements: { ...fields, versionId },
      transaction,
    }),
  );
}

/** Records a refusal: only the reasons are kept, never the data. */
async function refuseIntake(uploader: Uploader, start: IntakeStart, reasons: unknown[], stage: ProcessingStage): Promise<void> {
  await withIdentity(uploader.id, async (transaction) => {
    await appSequelize.query(
      `UPDATE extract_intakes SET status = 'refused', stage = :stage, reasons = CAST(:reasons AS jsonb), finished_at = now(), heartbeat_at = now()
        WHERE id = :versionId`,
      { replacements: { stage, reasons: JSON.stringify(reasons), versionId: start.versionId }, transaction },
    );
    await recordAudit(transaction, {
      action: 'extract.upload-refused', actorId: uploader.id, subjectType: 'extract', subjectId: start.extractId,
      initiativeId: start.initiativeId, clientAddress: uploader.clientAddress,
      details: { versionId: start.versionId, name: start.name, reasons },
    });
  });
}

async function failIntake(uploaderId: string, versionId: string, code: string, message: string): Promise<void> {
  await updateIntake(uploaderId, versionId, {
    status: 'failed', reasons: JSON.stringify([{ code, message }]), finished_at: new Date(),
  }).catch((error: unknown) => logger.error({ err: error, versionId }, 'could not record a failed intake'));
}

/**
 * Receives an upload: streams the body through the reader (refusing at once what is not
 * a CSV of acceptable size), keeps the raw bytes under a server-chosen name, answers with
 * the ids, and finishes screening, profiling and storing in the background.
 */
export async function receiveUpload(
  uploader: Uploader,
  target: { initiativeId: string; name: string } | { extractId: string },
  request: Request,
  options: { dropColumns?: readonly string[] } = {},
): Promise<{ extractId: string; versionId: string; done: Promise<void> }> {
  const start = await withIdentity(uploader.id, async (transaction): Promise<IntakeStart> => {
    let initiativeId: string;
    let extractId: string;
    let name: string;
    if ('extractId' in target) {
      const [extract] = await appSequelize.query<{ id: string; initiative_id: string; name: string; archived_at: Date | null }>(
        'SELECT id, initiative_id, name, archived_at FROM extracts WHERE id = :id',
        { replacements: { id: target.extractId }, type: QueryTypes.SELECT, transaction },
      );
      if (!extract) throw notFound('That extract');
      if (extract.archived_at) throw conflict('This extract is archived. Restore it before adding a version.');
      ({ initiative_id: initiativeId, id: extractId, name } = extract);
    } else {
      initiativeId = target.initiativeId;
      extractId = randomUUID();
      name = target.name;
    }
    const versionId = randomUUID();
    await appSequelize.query(
      `INSERT INTO extract_intakes (id, extract_id, initiative_id, name, new_extract, uploaded_by, status, stage, percent)
       VALUES (:versionId, :extractId, :initiativeId, :name, :newExtract, :uploadedBy, 'processing', 'receiving', 0)`,
      {
        replacements: { versionId, extractId, initiativeId, name, newExtract: !('extractId' in target), uploadedBy: uploader.id },
        transaction,
      },
    );
    return { initiativeId, extractId, versionId, name, newExtract: !('extractId' in target) };
  });

  mkdirSync(uploadDir(), { recursive: true, mode: 0o700 });
  const partFile = path.join(uploadDir(), `${start.versionId}.part`);
  const expectedBytes = Number(request.headers.get('content-length') ?? 0) || undefined;
  if (expectedBytes && expectedBytes > env.CROSSGRAIN_UPLOAD_MAX_BYTES) {
    const error = new ExtractRefusalError('too-large', `The file is larger than the limit of ${formatMegabytes(env.CROSSGRAIN_UPLOAD_MAX_BYTES)}.`, null);
    await refuseIntake(uploader, start, [error.toJSON()], 'receiving');
    throw refusalAsAppError(error);
  }

  let read: ReadExtract;
  const file = createWriteStream(partFile, { mode: 0o600 });
  // A refusal destroys the stream while a write may be pending; that error is expected.
  file.on('error', (error) => logger.debug({ err: error, versionId: start.versionId }, 'raw upload file closed early'));
  let lastReport = 0;
  try {
    read = await readExtractColumns(keepWhileReading(uploadSource(request), file), {
      expectedBytes,
      dropColumns: options.dropColumns,
      maxBytes: env.CROSSGRAIN_UPLOAD_MAX_BYTES,
      onProgress: ({ percent }) => {
        if (Date.now() - lastReport < 500) return;
        lastReport = Date.now();
        void updateIntake(uploader.id, start.versionId, { stage: 'reading', percent }).catch(() => {});
      },
    });
    await closeFile(file);
  } catch (error) {
    file.destroy();
    await rm(partFile, { force: true });
    if (error instanceof ExtractRefusalError) {
      await refuseIntake(uploader, start, [error.toJSON()], 'reading');
      throw refusalAsAppError(error);
    }
    if (error instanceof AppError) {
      await refuseIntake(uploader, start, [{ code: error.code, message: error.message, line: null }], 'receiving');
      throw error;
    }
    await failIntake(uploader.id, start.versionId, 'upload-interrupted', 'The upload was interrupted before the whole file arrived.');
    throw new AppError(400, 'upload-interrupted', 'The upload was interrupted before the whole file arrived. Nothing was kept.');
  }

  const done = finishIntake(uploader, start, read, partFile).catch(async (error: unknown) => {
    logger.error({ err: error, versionId: start.versionId }, 'extract processing failed');
    await rm(partFile, { force: true });
    await failIntake(uploader.id, start.versionId, 'processing-failed', 'Processing stopped with an error. Nothing was kept; upload the file again.');
  });
  return { extractId: start.extractId, versionId: start.versionId, done };
}

function formatMegabytes(bytes: number): string {
  return `${Math.round(bytes / 1024 / 1024)} MB`;
}

function refusalAsAppError(error: ExtractRefusalError): AppError {
  return new AppError(error.status, error.code, error.message, [{ path: 'file', message: error.message, line: error.line }]);
}

/** Passes chunks on while writing them to the raw file, respecting the disk's pace. */
async function* keepWhileReading(source: ChunkSource, file: ReturnType<typeof createWriteStream>): AsyncGenerator<Uint8Array> {
  for await (const chunk of source) {
    if (!file.write(chunk)) await new Promise<void>((resolve) => file.once('drain', () => resolve()));
    yield chunk;
  }
}

function closeFile(file: ReturnType<typeof createWriteStream>): Promise<void> {
  return new Promise((resolve, reject) => {
    file.end((error?: Error | null) => (error ? reject(error) : resolve()));
  });
}

/** Stage two, after the answer has gone: screen, profile, and store in one transaction. */
async function finishIntake(uploader: Uploader, start: IntakeStart, read: ReadExtract, partFile: string): Promise<void> {
  await updateIntake(uploader.id, start.versionId, { stage: 'screening', percent: 90 });
  const review = reviewExtractColumns(read.columns);
  if (review.refused) {
    await rm(partFile, { force: true });
    const reasons = review.refusals.map((r) => ({ code: 'identifier-screen', column: r.column, rules: r.rules, categories: r.categories, message: r.message }));
    await refuseIntake(uploader, start, reasons, 'screening');
    return;
  }
  await updateIntake(uploader.id, start.versionId, { stage: 'storing', percent: 95 });
  const stored = await withIdentity(uploader.id, (transaction) =>
    storeVersion(appSequelize, transaction, uploader, start, read, review.profile, review.findings),
  );
  if (!stored) {
    await rm(partFile, { force: true });
    return;
  }
  const finalPath = storedFile(start.initiativeId, start.versionId);
  mkdirSync(path.dirname(finalPath), { recursive: true, mode: 0o700 });
  await rename(partFile, finalPath);
}

/**
 * Writes the extract (when new), the version and every column, marks the intake stored
 * and records the audit event, all in the caller's transaction. Returns false (writing
 * nothing) when the intake was cancelled meanwhile. `afterColumn` lets tests pause here.
 */
export async function storeVersion(
  db: Sequelize,
  transaction: Transaction,
  uploader: Uploader,
  start: IntakeStart,
  read: ReadExtract,
  profile: ColumnProfile[],
  findings: unknown[],
  hooks: { afterColumn?: (position: number) => Promise<void> } = {},
): Promise<boolean> {
  const [intake] = await db.query<{ status: string }>('SELECT status FROM extract_intakes WHERE id = :id FOR UPDATE', {
    replacements: { id: start.versionId }, type: QueryTypes.SELECT, transaction,
  });
  if (!intake || intake.status !== 'processing') return false;
  if (start.newExtract) {
    await db.query('INSERT INTO extracts (id, initiative_id, name, created_by) VALUES (:id, :initiativeId, :name, :createdBy)', {
      replacements: { id: start.extractId, initiativeId: start.initiativeId, name: start.name, createdBy: uploader.id }, transaction,
    });
  }
  // Serialise version numbers per extract.
  await db.query('SELECT id FROM extracts WHERE id = :id FOR UPDATE', { replacements: { id: start.extractId }, transaction });
  const [{ next }] = await db.query<{ next: number }>(
    'SELECT coalesce(max(version_number), 0) + 1 AS next FROM extract_versions WHERE extract_id = :id',
    { replacements: { id: start.extractId }, type: QueryTypes.SELECT, transaction },
  );
  const kept = read.columns.filter((c) => c.kind === 'numeric' || !c.levelsOverflowed);
  // Bind parameters (not replacements): arrays and byte buffers go to PostgreSQL as they are.
  await db.query(
    `INSERT INTO extract_versions (id, extract_id, initiative_id, version_number, status, sha256, byte_count, row_count, column_count,
                                   delimiter, uploaded_by, profile, findings, dropped_columns)
     VALUES ($id, $extractId, $initiativeId, $next, 'needs-review', $sha256, $bytes, $rows, $columnCount, $delimiter, $uploadedBy,
             $profile::jsonb, $findings::jsonb, $dropped::text[])`,
    {
      bind: {
        id: start.versionId, extractId: start.extractId, initiativeId: start.initiativeId, next,
        sha256: read.read.sha256, bytes: read.read.byteCount, rows: read.read.recordCount, columnCount: kept.length,
        delimiter: read.read.delimiter, uploadedBy: uploader.id, profile: JSON.stringify(profile),
        findings: JSON.stringify(findings), dropped: read.droppedColumns,
      },
      transaction,
    },
  );
  for (const column of kept) {
    const encoded = encodeColumn(column);
    await db.query(
      `INSERT INTO extract_columns (version_id, initiative_id, position, name, storage, row_count, missing_count, values, missing, levels)
       VALUES ($versionId, $initiativeId, $position, $name, $storage, $rows, $missingCount, $values, $missing, $levels)`,
      {
        bind: {
          versionId: start.versionId, initiativeId: start.initiativeId, position: encoded.position, name: encoded.name,
          storage: encoded.storage, rows: encoded.rowCount, missingCount: encoded.missingCount,
          values: encoded.values, missing: encoded.missing, levels: encoded.levels,
        },
        transaction,
      },
    );
    await hooks.afterColumn?.(encoded.position);
  }
  await db.query(
    "UPDATE extract_intakes SET status = 'stored', stage = 'storing', percent = 100, byte_count = :bytes, finished_at = now(), heartbeat_at = now() WHERE id = :id",
    { replacements: { id: start.versionId, bytes: read.read.byteCount }, transaction },
  );
  await recordAudit(transaction, {
    action: start.newExtract ? 'extract.uploaded' : 'extract.version-added',
    actorId: uploader.id, subjectType: 'extract', subjectId: start.extractId, initiativeId: start.initiativeId,
    clientAddress: uploader.clientAddress,
    details: { versionId: start.versionId, version: next, name: start.name, sha256: read.read.sha256, rows: read.read.recordCount, columns: kept.length },
  });
  return true;
}

/** Cancels an upload that is still being processed; a no-op answer when it already ended. */
export async function cancelIntake(transaction: Transaction, uploader: Uploader, extractId: string, versionId: string): Promise<boolean> {
  const [intake] = await appSequelize.query<{ status: string; initiative_id: string }>(
    'SELECT status, initiative_id FROM extract_intakes WHERE id = :versionId AND extract_id = :extractId FOR UPDATE',
    { replacements: { versionId, extractId }, type: QueryTypes.SELECT, transaction },
  );
  if (!intake) throw notFound('That upload');
  if (intake.status !== 'processing') return false;
  await appSequelize.query(
    `UPDATE extract_intakes SET status = 'failed', reasons = CAST(:reasons AS jsonb), finished_at = now() WHERE id = :versionId`,
    { replacements: { versionId, reasons: JSON.stringify([{ code: 'cancelled', message: 'Cancelled by the uploader. Nothing was kept.' }]) }, transaction },
  );
  await recordAudit(transaction, {
    action: 'extract.upload-cancelled', actorId: uploader.id, subjectType: 'extract', subjectId: extractId,
    initiativeId: intake.initiative_id, clientAddress: uploader.clientAddress, details: { versionId },
  });
  return true;
}

// ---------------------------------------------------------------------------------------
// Reading
// ---------------------------------------------------------------------------------------

export interface VersionView {
  versionId: string;
  version: number | null;
  status: 'processing' | 'needs-review' | 'ready' | 'refused' | 'failed';
  stage?: string;
  percent?: number;
  reasons?: unknown[];
  sha256: string | null;
  rows: number | null;
  columns: number | null;
  bytes: number | null;
  uploadedBy: { id: string; name: string };
  uploadedAt: string;
  findings?: unknown[];
  profile?: ColumnProfile[];
  dictionary?: DictionaryEntry[] | null;
  attestation?: { signedName: string; signedAt: string; statement: string; userId: string } | null;
  droppedColumns?: string[];
}

export interface ExtractView {
  id: string;
  initiativeId: string;
  name: string;
  createdAt: string;
  archivedAt: string | null;
  /** Newest first. */
  versions: VersionView[];
}

const iso = (value: Date | string) => new Date(value).toISOString();

/** An extract with every version and every upload attempt, or null when not visible. */
export async function getExtract(transaction: Transaction, extractId: string, options: { withProfiles?: boolean } = {}): Promise<ExtractView | null> {
  // Upload attempts are read first, then the extract and its versions: an upload stored
  // in between then shows as its version (its attempt is dropped below) and never vanishes
  // from both lists, as it could the other way round under read-committed isolation.
  const intakes = await appSequelize.query<{
    id: string; initiative_id: string; name: string; status: 'processing' | 'refused' | 'failed' | 'stored'; stage: string;
    percent: number; reasons: unknown[]; uploaded_by: string; uploader: string; created_at: Date; heartbeat_at: Date; byte_count: string | null;
  }>(
    `SELECT i.id, i.initiative_id, i.name, i.status, i.stage, i.percent, i.reasons, i.uploaded_by, u.display_name AS uploader,
            i.created_at, i.heartbeat_at, i.byte_count
       FROM extract_intakes i JOIN users u ON u.id = i.uploaded_by
      WHERE i.extract_id = :id ORDER BY i.created_at DESC`,
    { replacements: { id: extractId }, type: QueryTypes.SELECT, transaction },
  );
  const [extract] = await appSequelize.query<{ id: string; initiative_id: string; name: string; created_at: Date; archived_at: Date | null }>(
    'SELECT id, initiative_id, name, created_at, archived_at FROM extracts WHERE id = :id',
    { replacements: { id: extractId }, type: QueryTypes.SELECT, transaction },
  );
  const versions = await appSequelize.query<{
    id: string; version_number: number; status: 'needs-review' | 'ready'; sha256: string; row_count: number; column_count: number;
    byte_count: string; uploaded_by: string; uploader: string; uploaded_at: Date; profile: ColumnProfile[]; findings: unknown[];
    dictionary: DictionaryEntry[] | null; attestation: VersionView['attestation']; dropped_columns: string[];
  }>(
    `SELECT v.id, v.version_number, v.status, v.sha256, v.row_count, v.column_count, v.byte_count, v.uploaded_by,
            u.display_name AS uploader, v.uploaded_at, ${options.withProfiles ? 'v.profile' : "'[]'::jsonb AS profile"}, v.findings,
            v.dictionary, v.attestation, v.dropped_columns
       FROM extract_versions v JOIN users u ON u.id = v.uploaded_by
      WHERE v.extract_id = :id ORDER BY v.version_number DESC`,
    { replacements: { id: extractId }, type: QueryTypes.SELECT, transaction },
  );
  const storedIds = new Set(versions.map((v) => v.id));
  const open = intakes.filter((i) => i.status !== 'stored' && !storedIds.has(i.id));
  if (!extract && open.length === 0) return null;
  const pending: VersionView[] = open.map((i) => {
    const stale = i.status === 'processing' && Date.now() - new Date(i.heartbeat_at).getTime() > INTAKE_STALE_MS;
    return {
      versionId: i.id,
      version: null,
      status: stale ? 'failed' : i.status === 'stored' ? 'ready' : i.status,
      stage: i.stage,
      percent: Math.round(i.percent),
      reasons: stale ? [{ code: 'processing-stopped', message: 'Processing stopped (the server restarted). Nothing was kept; upload the file again.' }] : i.reasons,
      sha256: null, rows: null, columns: null, bytes: i.byte_count === null ? null : Number(i.byte_count),
      uploadedBy: { id: i.uploaded_by, name: i.uploader },
      uploadedAt: iso(i.created_at),
    };
  });
  const stored: VersionView[] = versions.map((v) => ({
    versionId: v.id,
    version: v.version_number,
    status: v.status,
    sha256: v.sha256,
    rows: v.row_count,
    columns: v.column_count,
    bytes: Number(v.byte_count),
    uploadedBy: { id: v.uploaded_by, name: v.uploader },
    uploadedAt: iso(v.uploaded_at),
    findings: v.findings,
    ...(options.withProfiles ? { profile: v.profile } : {}),
    dictionary: v.dictionary,
    attestation: v.attestation,
    droppedColumns: v.dropped_columns,
  }));
  const first = intakes[intakes.length - 1];
  return {
    id: extractId,
    initiativeId: extract?.initiative_id ?? first.initiative_id,
    name: extract?.name ?? first.name,
    createdAt: iso(extract?.created_at ?? first.created_at),
    archivedAt: extract?.archived_at ? iso(extract.archived_at) : null,
    versions: [...pending, ...stored].sort((a, b) => b.uploadedAt.localeCompare(a.uploadedAt)),
  };
}

/**
 * The initiative an extract (or an upload that never became one) belongs to, as the
 * caller may see it; null otherwise. Enough to authorise an action without reading the
 * whole extract.
 */
export async function extractScope(transaction: Transaction, extractId: string): Promise<{ initiativeId: string } | null> {
  const [row] = await appSequelize.query<{ initiative_id: string }>(
    `SELECT initiative_id FROM extracts WHERE id = :id
     UNION ALL SELECT initiative_id FROM extract_intakes WHERE extract_id = :id LIMIT 1`,
    { replacements: { id: extractId }, type: QueryTypes.SELECT, transaction },
  );
  return row ? { initiativeId: row.initiative_id } : null;
}

export interface ExtractListItem {
  id: string;
  name: string;
  archivedAt: string | null;
  latestVersion: number | null;
  latestStatus: string | null;
  rows: number | null;
  updatedAt: string;
}

/** The initiative's extracts (archived ones included, flagged), newest first. */
export async function listExtracts(transaction: Transaction, initiativeId: string): Promise<ExtractListItem[]> {
  const rows = await appSequelize.query<{
    id: string; name: string; archived_at: Date | null; version_number: number | null; status: string | null; row_count: number | null; updated_at: Date;
  }>(
    `SELECT e.id, e.name, e.archived_at, v.version_number, v.status, v.row_count, coalesce(v.uploaded_at, e.created_at) AS updated_at
       FROM extracts e
       LEFT JOIN LATERAL (SELECT version_number, status, row_count, uploaded_at FROM extract_versions
                           WHERE extract_id = e.id ORDER BY version_number DESC LIMIT 1) v ON true
      WHERE e.initiative_id = :initiativeId ORDER BY updated_at DESC`,
    { replacements: { initiativeId }, type: QueryTypes.SELECT, transaction },
  );
  return rows.map((r) => ({
    id: r.id, name: r.name, archivedAt: r.archived_at ? iso(r.archived_at) : null, latestVersion: r.version_number,
    latestStatus: r.status, rows: r.row_count, updatedAt: iso(r.updated_at),
  }));
}

/** Confirms a version's dictionary and attestation, making it ready (and immutable). */
export async function confirmVersion(
  transaction: Transaction,
  actor: Uploader & { displayName: string },
  extractId: string,
  versionId: string,
  body: { attestation: { signedName: string }; columns?: DictionaryEntry[] },
): Promise<void> {
  const [version] = await appSequelize.query<{ status: string; profile: ColumnProfile[]; initiative_id: string; sha256: string; version_number: number }>(
    'SELECT status, profile, initiative_id, sha256, version_number FROM extract_versions WHERE id = :versionId AND extract_id = :extractId FOR UPDATE',
    { replacements: { versionId, extractId }, type: QueryTypes.SELECT, transaction },
  );
  if (!version) throw notFound('That version');
  if (version.status === 'ready') throw conflict('This version is already confirmed; a confirmed version never changes. Upload a new version instead.');
  const dictionary = buildDictionary(version.profile, body.columns);
  const attestation = { signedName: body.attestation.signedName, signedAt: new Date().toISOString(), statement: ATTESTATION_STATEMENT, userId: actor.id };
  await appSequelize.query(
    `UPDATE extract_versions SET status = 'ready', dictionary = CAST(:dictionary AS jsonb), attestation = CAST(:attestation AS jsonb),
            confirmed_by = :actor, confirmed_at = now() WHERE id = :versionId`,
    { replacements: { dictionary: JSON.stringify(dictionary), attestation: JSON.stringify(attestation), actor: actor.id, versionId }, transaction },
  );
  await recordAudit(transaction, {
    action: 'extract.confirmed', actorId: actor.id, subjectType: 'extract', subjectId: extractId, initiativeId: version.initiative_id,
    clientAddress: actor.clientAddress,
    details: {
      versionId, version: version.version_number, sha256: version.sha256, signedName: body.attestation.signedName, corrected: Boolean(body.columns),
      missingValues: Object.fromEntries(dictionary.filter((d) => (d.missingValues ?? []).length > 0).map((d) => [d.name, d.missingValues])),
    },
  });
}

/** Which corrections of an inferred type are meaningful. */
const ALLOWED_TYPES: Record<string, readonly DictionaryEntry['type'][]> = {
  binary: ['binary', 'categorical'],
  categorical: ['categorical', 'binary'],
  continuous: ['continuous'],
  count: ['count', 'continuous', 'categorical'],
};

/** The confirmed dictionary: the inferred types, or the analyst's corrections checked against the profile. */
export function buildDictionary(profile: ColumnProfile[], columns?: DictionaryEntry[]): DictionaryEntry[] {
  const analysable = profile.filter((p) => p.inferredType in ALLOWED_TYPES);
  if (!columns) {
    return analysable.map((p) => ({ name: p.name, type: p.inferredType as DictionaryEntry['type'], description: '', missingValues: [] }));
  }
  const byName = new Map(columns.map((c) => [c.name, c]));
  const problems: { path: string; message: string }[] = [];
  for (const name of byName.keys()) {
    if (!analysable.some((p) => p.name === name)) problems.push({ path: `columns.${name}`, message: `There is no column “${name}” in this version.` });
  }
  const dictionary = analysable.map((p, index) => {
    const entry = byName.get(p.name);
    if (!entry) return { name: p.name, type: p.inferredType as DictionaryEntry['type'], description: '', missingValues: [] };
    const allowed = ALLOWED_TYPES[p.inferredType];
    if (!allowed.includes(entry.type)) {
      problems.push({ path: `columns.${index}.type`, message: `“${p.name}” was read as ${p.inferredType}; it can be recorded as ${allowed.join(' or ')}, not ${entry.type}.` });
    }
    const missingValues = declaredMissingValues(p, entry.missingValues ?? [], `columns.${index}.missingValues`, problems);
    // Declared codes are not values: "yes, no, unknown" with "unknown" declared is binary.
    const distinct = p.levels && !p.levelsTruncated ? levelsLeftIn(p.levels.map((l) => l.value), missingValues).length : p.distinctCount;
    if (entry.type === 'binary' && distinct > 2) {
      problems.push({ path: `columns.${index}.type`, message: `“${p.name}” has ${distinct} distinct values, so it cannot be binary.` });
    }
    return { name: p.name, type: entry.type, description: entry.description ?? '', missingValues };
  });
  if (problems.length) throw unprocessable('dictionary-invalid', problems[0].message, problems);
  return dictionary;
}

/**
 * The analyst's extra missing-value codes for one column, trimmed and without repeats
 * (ignoring case) or shared tokens (those are missing anyway). A column stored as numbers
 * only takes numbers: a word could never occur in it.
 */
function declaredMissingValues(profile: ColumnProfile, codes: readonly string[], path: string, problems: { path: string; message: string }[]): string[] {
  const out: string[] = [];
  for (const raw of codes) {
    const code = raw.trim();
    if (isMissingToken(code) || out.some((kept) => missingCodeKey(kept) === missingCodeKey(code))) continue;
    if (profile.storage === 'numeric' && !Number.isFinite(Number(code))) {
      problems.push({ path, message: `“${profile.name}” holds only numbers, so “${code}” cannot occur in it; declare numeric codes such as 999.` });
      continue;
    }
    out.push(code);
  }
  return out;
}

/** Archives (hides from new analyses) or restores an extract. Versions are never deleted. */
export async function setArchived(transaction: Transaction, actor: Uploader, extractId: string, archived: boolean): Promise<void> {
  const [extract] = await appSequelize.query<{ initiative_id: string; archived_at: Date | null }>(
    'SELECT initiative_id, archived_at FROM extracts WHERE id = :id FOR UPDATE',
    { replacements: { id: extractId }, type: QueryTypes.SELECT, transaction },
  );
  if (!extract) throw notFound('That extract');
  if (Boolean(extract.archived_at) === archived) return;
  await appSequelize.query('UPDATE extracts SET archived_at = :at, archived_by = :by WHERE id = :id', {
    replacements: { id: extractId, at: archived ? new Date() : null, by: archived ? actor.id : null }, transaction,
  });
  await recordAudit(transaction, {
    action: archived ? 'extract.archived' : 'extract.restored', actorId: actor.id, subjectType: 'extract', subjectId: extractId,
    initiativeId: extract.initiative_id, clientAddress: actor.clientAddress,
  });
}

// ---------------------------------------------------------------------------------------
// Columns: preview and analysis
// ---------------------------------------------------------------------------------------


/**
 * Loads columns of one version as typed arrays. The version must be visible to the
 * transaction's identity (row-level security). `missingValues` are the codes the analyst
 * declared missing per column at confirmation (pass them to toEngineData). Versions are
 * immutable, so decoded columns are cached per version after this check.
 */
export async function loadColumns(
  transaction: Transaction,
  versionId: string,
  names?: readonly string[],
): Promise<{ rowCount: number; columns: StoredColumn[]; missingValues: Record<string, string[]> }> {
  const rows = await appSequelize.query<{ name: string; storage: 'numeric' | 'text'; row_count: number; values: Buffer; levels: string[] | null }>(
    `SELECT name, storage, row_count, values, levels FROM extract_columns
      WHERE version_id = :versionId ${names ? 'AND name IN (:names)' : ''} ORDER BY position`,
    { replacements: { versionId, names: names ?? [] }, type: QueryTypes.SELECT, transaction },
  );
  const rowCount = rows[0]?.row_count ?? 0;
  const columns = rows.map((r): StoredColumn =>
    r.storage === 'numeric'
      ? { name: r.name, storage: 'numeric', values: decodeNumericValues(r.values, r.row_count) }
      : { name: r.name, storage: 'text', codes: decodeCodes(r.values, r.row_count, r.levels?.length ?? 0), levels: r.levels ?? [] },
  );
  const [version] = await appSequelize.query<{ dictionary: DictionaryEntry[] | null }>(
    'SELECT dictionary FROM extract_versions WHERE id = :versionId',
    { replacements: { versionId }, type: QueryTypes.SELECT, transaction },
  );
  const missingValues: Record<string, string[]> = {};
  for (const entry of version?.dictionary ?? []) {
    if (entry.missingValues && entry.missingValues.length > 0) missingValues[entry.name] = entry.missingValues;
  }
  return { rowCount, columns, missingValues };
}

/**
 * The columns an analysis uses, engine-ready: the one way another area (runs) reads an
 * extract version's data, with the analyst's declared missing-value codes applied. The
 * version must be visible to the transaction's identity.
 */
export async function loadAnalysisData(
  transaction: Transaction,
  versionId: string,
  roles: Record<string, 'categorical' | 'continuous'>,
): Promise<EngineData> {
  const loaded = await loadColumns(transaction, versionId, Object.keys(roles));
  return toEngineData(loaded.rowCount, loaded.columns, roles, loaded.missingValues);
}

const previewCache = new Map<string, { rowCount: number; columns: StoredColumn[]; order: Map<string, Uint32Array> }>();
const PREVIEW_CACHE_SIZE = 4;

export interface RowsPage {
  columns: string[];
  rows: (string | number | null)[][];
  total: number;
  page: number;
  pageSize: number;
  sort: { column: string; direction: 'asc' | 'desc' } | null;
}

/** One page of rows, sorted on the server. The caller has checked the version is visible. */
export async function previewRows(
  transaction: Transaction,
  versionId: string,
  query: { page: number; pageSize: number; sort?: string; direction: 'asc' | 'desc' },
): Promise<RowsPage> {
  let cached = previewCache.get(versionId);
  if (!cached) {
    const loaded = await loadColumns(transaction, versionId);
    cached = { ...loaded, order: new Map() };
    previewCache.set(versionId, cached);
    if (previewCache.size > PREVIEW_CACHE_SIZE) previewCache.delete(previewCache.keys().next().value as string);
  }
  const { rowCount, columns } = cached;
  const sortColumn = query.sort ? columns.find((c) => c.name === query.sort) : undefined;
  if (query.sort && !sortColumn) throw badRequest(`There is no column “${query.sort}” to sort by.`);
  let order: Uint32Array | null = null;
  if (sortColumn) {
    const key = `${sortColumn.name}:${query.direction}`;
    order = cached.order.get(key) ?? null;
    if (!order) {
      order = sortOrder(sortColumn, rowCount, query.direction);
      cached.order.set(key, order);
    }
  }
  const startRow = (query.page - 1) * query.pageSize;
  const rows: (string | number | null)[][] = [];
  for (let r = startRow; r < Math.min(rowCount, startRow + query.pageSize); r += 1) {
    const i = order ? order[r] : r;
    rows.push(columns.map((c) => {
      if (c.storage === 'numeric') return Number.isNaN(c.values[i]) ? null : c.values[i];
      return c.codes[i] < 0 ? null : c.levels[c.codes[i]];
    }));
  }
  return {
    columns: columns.map((c) => c.name), rows, total: rowCount, page: query.page, pageSize: query.pageSize,
    sort: sortColumn ? { column: sortColumn.name, direction: query.direction } : null,
  };
}

/** A stable sort order of one column; missing values last whatever the direction. */
function sortOrder(column: StoredColumn, rowCount: number, direction: 'asc' | 'desc'): Uint32Array {
  const order = new Uint32Array(rowCount);
  for (let i = 0; i < rowCount; i += 1) order[i] = i;
  const sign = direction === 'asc' ? 1 : -1;
  if (column.storage === 'numeric') {
    const v = column.values;
    order.sort((a, b) => {
      const x = v[a];
      const y = v[b];
      if (Number.isNaN(x)) return Number.isNaN(y) ? a - b : 1;
      if (Number.isNaN(y)) return -1;
      return x === y ? a - b : (x - y) * sign;
    });
  } else {
    const rank = new Int32Array(column.levels.length);
    const sorted = column.levels.map((l, i) => [l, i] as const).sort((p, q) => p[0].localeCompare(q[0]));
    sorted.forEach(([, code], position) => { rank[code] = position; });
    const codes = column.codes;
    order.sort((a, b) => {
      const x = codes[a];
      const y = codes[b];
      if (x < 0) return y < 0 ? a - b : 1;
      if (y < 0) return -1;
      return rank[x] === rank[y] ? a - b : (rank[x] - rank[y]) * sign;
    });
  }
  return order;
}
