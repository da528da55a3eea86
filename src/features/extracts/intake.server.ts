/**
 * Receiving an upload: the request body (raw CSV or a multipart form), the intake record
 * (`extract_intakes`) that tracks it, and the background steps that screen it and hand it
 * to storeStagedVersion (versionStaging.server.ts).
 *
 * The intake record is committed on its own so that progress and refusals are visible
 * while nothing else exists yet. The extract, its version, its columns and its raw file
 * are written together in one transaction at the end: a refused, cancelled, failed or
 * killed upload leaves none of them behind, and its partial file is removed.
 */
import { randomUUID } from 'node:crypto';
import { createWriteStream, mkdirSync } from 'node:fs';
import { readdir, rm, stat } from 'node:fs/promises';
import path from 'node:path';
import { Readable } from 'node:stream';
import Busboy from 'busboy';
import { fn, type Transaction } from 'sequelize';
import { Extract, ExtractIntake } from '../../../db/models';
import { sequelize as appSequelize, withIdentity } from '@/lib/server/db';
import { env } from '@/lib/server/env';
import { AppError, badRequest, conflict, notFound, unsupportedMediaType } from '@/lib/server/errors';
import { logger } from '@/lib/server/logger';
import { bodyChunks } from '@/lib/server/requestBody';
import { recordAudit } from '../audit/audit.server';
import { ExtractRefusalError } from './extractRefusal';
import { columnGroups, ONE_PASS_BYTES, rereadColumns } from './columnPasses';
import { readExtractColumns, reviewExtractColumns, type ReadExtract, type ReviewedExtract } from './extracts';
import { KeepRequest, type ProcessingStage } from './extracts.schema';
import type { IntakeStart, Uploader } from './extracts.server';
import { storeStagedVersion } from './versionStaging.server';

const uploadDir = () => path.resolve(env.CROSSGRAIN_DATA_DIR, 'uploads');

type ChunkSource = AsyncIterable<Uint8Array>;

/** When this process started: a partial file older than that belongs to an ended process. */
const processStartedAt = Date.now() - process.uptime() * 1000;

/**
 * Removes the partial upload files (`.part`) that a process which ended mid-upload (a
 * crash, a kill) left behind: those last changed before this process started. Runs once
 * per process, before its first upload; returns the names removed.
 */
export async function sweepPartialUploads(directory = uploadDir(), startedAt = processStartedAt): Promise<string[]> {
  let names: string[];
  try {
    names = await readdir(directory);
  } catch {
    return [];
  }
  const removed: string[] = [];
  for (const name of names.filter((entry) => entry.endsWith('.part'))) {
    const file = path.join(directory, name);
    const info = await stat(file).catch(() => null);
    if (!info || info.mtimeMs >= startedAt) continue;
    await rm(file, { force: true });
    removed.push(name);
  }
  if (removed.length > 0) logger.info({ count: removed.length }, 'removed partial upload files left by an earlier process');
  return removed;
}

let swept: Promise<string[]> | null = null;

/**
 * Sweeps the partial files of an earlier process once per process: called when the server
 * loads its request handling, and again (a no-op then) before the first upload.
 */
export function sweepOnce(): Promise<string[]> {
  swept ??= sweepPartialUploads().catch((error: unknown) => {
    logger.warn({ err: error }, 'could not sweep partial upload files');
    return [];
  });
  return swept;
}

/** Closes a partial file (waiting for a pending open to settle) and removes it. */
async function discardPartFile(file: ReturnType<typeof createWriteStream>, partFile: string): Promise<void> {
  if (!file.closed) {
    const closed = new Promise<void>((resolve) => file.once('close', () => resolve()));
    file.destroy();
    await closed;
  }
  await rm(partFile, { force: true });
}

/** Text fields of a multipart form, by name (a repeated field keeps every value). */
export type FormFields = Map<string, string[]>;

/**
 * The CSV bytes of a request: a raw `text/csv` body, or the first file of a multipart form.
 * The form's text fields are added to `fields`; all of them are there once the file has
 * been read to the end.
 */
export function uploadSource(request: Request, fields: FormFields = new Map()): ChunkSource {
  const type = (request.headers.get('content-type') ?? '').toLowerCase();
  if (!request.body) throw badRequest('The request has no body. Send the CSV file as the body.');
  if (type.startsWith('text/csv') || type.startsWith('application/csv') || type.startsWith('text/plain')) {
    return bodyChunks(request.body);
  }
  if (type.startsWith('multipart/form-data')) return multipartFile(request, fields);
  throw unsupportedMediaType('Send the extract as text/csv, or as a file in multipart/form-data.');
}

/** Streams the first file part of a multipart body, collecting the text fields into `fields`. */
async function* multipartFile(request: Request, fields: FormFields): AsyncGenerator<Uint8Array> {
  const headers = Object.fromEntries(request.headers);
  const parser = Busboy({ headers, limits: { files: 1, fileSize: env.CROSSGRAIN_UPLOAD_MAX_BYTES + 1, fields: 100, fieldSize: 4000 } });
  parser.on('field', (name, value) => fields.set(name, [...(fields.get(name) ?? []), value]));
  const finished = new Promise<void>((resolve, reject) => {
    parser.on('close', () => resolve());
    parser.on('error', reject);
  });
  finished.catch(() => undefined); // handled where it is awaited
  if (!request.body) throw badRequest('The request has no body. Send the CSV file as the body.');
  const input = Readable.from(bodyChunks(request.body));
  const file = new Promise<Readable>((resolve, reject) => {
    parser.on('file', (_name, stream) => resolve(stream));
    parser.on('error', reject);
    parser.on('close', () => reject(badRequest('The form holds no file. Attach the CSV file.')));
  });
  input.pipe(parser);
  const stream = await file;
  for await (const chunk of stream) yield chunk as Uint8Array;
  // Fields after the file arrive once the rest of the body is parsed.
  await finished;
}

type IntakeChange = Partial<Pick<ExtractIntake, 'status' | 'stage' | 'percent' | 'reasons' | 'finishedAt'>>;

/** Changes an intake record in a transaction of its own, so that its progress shows at once. */
async function updateIntake(uploaderId: string, versionId: string, fields: IntakeChange): Promise<void> {
  await withIdentity(uploaderId, (transaction) =>
    ExtractIntake.update({ ...fields, heartbeatAt: fn('now') }, { where: { id: versionId }, transaction }),
  );
}

/** Records a refusal: only the reasons are kept, never the data. */
async function refuseIntake(
  uploader: Uploader,
  start: IntakeStart,
  reasons: unknown[],
  stage: ProcessingStage,
  asked: { droppedColumns?: readonly string[]; keep?: readonly string[]; keepReason?: string } = {},
): Promise<void> {
  await withIdentity(uploader.id, async (transaction) => {
    await ExtractIntake.update(
      { status: 'refused', stage, reasons, finishedAt: fn('now'), heartbeatAt: fn('now') },
      { where: { id: start.versionId }, transaction },
    );
    await recordAudit(transaction, {
      action: 'extract.upload-refused', actorId: uploader.id, subjectType: 'extract', subjectId: start.extractId,
      initiativeId: start.initiativeId, clientAddress: uploader.clientAddress,
      details: {
        versionId: start.versionId, name: start.name, reasons, privacyRegime: env.CROSSGRAIN_PRIVACY_REGIME,
        ...(asked.droppedColumns?.length ? { droppedColumns: [...asked.droppedColumns] } : {}),
        ...(asked.keep?.length ? { keepAsked: [...asked.keep], keepReason: asked.keepReason ?? '' } : {}),
      },
    });
  });
}

async function failIntake(uploaderId: string, versionId: string, code: string, message: string): Promise<void> {
  await updateIntake(uploaderId, versionId, {
    status: 'failed', reasons: [{ code, message }], finishedAt: new Date(),
  }).catch((error: unknown) => logger.error({ err: error, versionId }, 'could not record a failed intake'));
}

/**
 * Receives an upload: streams the body through the reader (refusing at once what is not
 * a CSV of acceptable size), writes the raw bytes to a partial file under a server-chosen
 * name, answers with the ids, and finishes screening, profiling and storing in the
 * background (a large upload's columns are read again from the partial file a group at a
 * time: columnPasses.ts).
 */
export async function receiveUpload(
  uploader: Uploader,
  target: { initiativeId: string; name: string } | { extractId: string },
  request: Request,
  options: { dropColumns?: readonly string[]; keep?: readonly string[]; keepReason?: string } = {},
): Promise<{ extractId: string; versionId: string; done: Promise<void> }> {
  const start = await withIdentity(uploader.id, async (transaction): Promise<IntakeStart> => {
    let initiativeId: string;
    let extractId: string;
    let name: string;
    if ('extractId' in target) {
      const extract = await Extract.findByPk(target.extractId, { attributes: ['id', 'initiativeId', 'name', 'archivedAt'], transaction });
      if (!extract) throw notFound('That extract');
      if (extract.archivedAt) throw conflict('This extract is archived. Restore it before adding a version.');
      ({ initiativeId, id: extractId, name } = extract);
    } else {
      initiativeId = target.initiativeId;
      extractId = randomUUID();
      name = target.name;
    }
    const versionId = randomUUID();
    await ExtractIntake.create(
      {
        id: versionId, extractId, initiativeId, name, newExtract: !('extractId' in target), uploadedBy: uploader.id,
        status: 'processing', stage: 'receiving', percent: 0,
      },
      { transaction },
    );
    return { initiativeId, extractId, versionId, name, newExtract: !('extractId' in target) };
  });

  mkdirSync(uploadDir(), { recursive: true, mode: 0o700 });
  await sweepOnce();
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
  const fields: FormFields = new Map();
  const keepNames = () => [...(options.keep ?? []), ...(fields.get('keep') ?? [])];
  // A large upload keeps no columns while it arrives (only those it asks to keep, for the
  // keep check below): they are read again from the file a few at a time (columnPasses.ts).
  const onePass = expectedBytes !== undefined && expectedBytes <= ONE_PASS_BYTES;
  try {
    read = await readExtractColumns(keepWhileReading(uploadSource(request, fields), file), {
      expectedBytes,
      dropColumns: options.dropColumns,
      onlyColumns: onePass ? undefined : (name) => keepNames().includes(name),
      maxBytes: env.CROSSGRAIN_UPLOAD_MAX_BYTES,
      onProgress: ({ percent }) => {
        if (Date.now() - lastReport < 500) return;
        lastReport = Date.now();
        void updateIntake(uploader.id, start.versionId, { stage: 'reading', percent }).catch(() => {});
      },
    });
    await closeFile(file);
  } catch (error) {
    // A refusal on the first chunk can come before the file has even opened: wait for it
    // to close, or a 0-byte file would appear after the removal.
    await discardPartFile(file, partFile);
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

  let keeping: Keeping;
  try {
    keeping = await keptColumnsOf(read, partFile, { keep: keepNames(), keepReason: options.keepReason ?? fields.get('keepReason')?.[0] }, options.dropColumns);
  } catch (error) {
    await rm(partFile, { force: true });
    if (error instanceof AppError) await refuseIntake(uploader, start, [{ code: error.code, message: error.message, line: null }], 'screening');
    throw error;
  }

  const done = finishIntake(uploader, start, read, partFile, keeping, options.dropColumns).catch(async (error: unknown) => {
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

function parseKeepRequest(request: { keep: string[]; keepReason?: string }): KeepRequest {
  const parsed = KeepRequest.safeParse(request);
  if (parsed.success) return parsed.data;
  const issue = parsed.error.issues[0];
  throw new AppError(400, 'keep-invalid', issue.message, [{ path: issue.path.join('.'), message: issue.message }]);
}

/**
 * The `keep` (repeatable) and `keepReason` query parameters of an upload. Without a
 * multipart form (whose fields could still add them) a bad pair is a 400 before anything
 * is written.
 */
export function keepAsked(url: URL, request: Request): { keep: string[]; keepReason?: string } {
  const asked = { keep: url.searchParams.getAll('keep'), keepReason: url.searchParams.get('keepReason') ?? undefined };
  const multipart = (request.headers.get('content-type') ?? '').toLowerCase().startsWith('multipart/form-data');
  if (!multipart) parseKeepRequest(asked);
  return asked;
}

/** The columns an upload asks to keep, with the reason and (when any) the screen's review already done. */
interface Keeping {
  keep: string[];
  reason: string;
  review: ReviewedExtract | null;
}

/**
 * Checks the keep request of an upload once its file has been read (query parameters and
 * form fields together): every kept column needs the reason and must have been flagged by
 * the screen. A 400 otherwise. A kept column with a value-based finding passes here and is
 * refused by the screen, with the same message as without `keep`.
 */
async function keptColumnsOf(
  read: ReadExtract,
  partFile: string,
  request: { keep: string[]; keepReason?: string },
  dropColumns: readonly string[] | undefined,
): Promise<Keeping> {
  const parsed = parseKeepRequest(request);
  const keep = [...new Set(parsed.keep)];
  if (keep.length === 0) return { keep, reason: '', review: null };
  const dropped = keep.filter((name) => read.droppedColumns.includes(name));
  if (dropped.length > 0) {
    throw new AppError(400, 'keep-invalid', `Column "${dropped[0]}" cannot be both left out and kept.`, [{ path: 'keep', message: dropped[0] }]);
  }
  // Kept columns named only in form fields after the file were not built while it arrived.
  const held = new Set(read.columns.map((c) => c.index));
  const wanted = new Set(read.header.flatMap((name, index) => (keep.includes(name) && !held.has(index) ? [index] : [])));
  if (wanted.size > 0) {
    const more = await rereadColumns(partFile, read, wanted, { dropColumns, maxBytes: env.CROSSGRAIN_UPLOAD_MAX_BYTES });
    read.columns = [...read.columns, ...more].sort((a, b) => a.index - b.index);
  }
  const review = reviewExtractColumns(read.columns.filter((c) => keep.includes(c.name)), { regime: env.CROSSGRAIN_PRIVACY_REGIME }, keep);
  if (review.keptButNotFlagged.length > 0) {
    const name = review.keptButNotFlagged[0];
    const present = read.header.includes(name);
    const message = present
      ? `Column "${name}" was not flagged by the identifier screen, so there is nothing to keep. Only a column flagged by its name alone can be kept.`
      : `There is no column "${name}" in the file, so it cannot be kept. Only a column flagged by its name alone can be kept.`;
    throw new AppError(400, 'keep-invalid', message, [{ path: 'keep', message }]);
  }
  return { keep, reason: parsed.keepReason ?? '', review };
}

/**
 * Stage two, after the answer has gone: screen, profile and store in one transaction,
 * the columns a group at a time (versionStaging.server.ts), the raw file with them.
 */
async function finishIntake(
  uploader: Uploader,
  start: IntakeStart,
  read: ReadExtract,
  partFile: string,
  keeping: Keeping,
  dropColumns: readonly string[] | undefined,
): Promise<void> {
  try {
    await updateIntake(uploader.id, start.versionId, { stage: 'screening', percent: 90 });
    const groups = columnGroups(partFile, read, {
      dropColumns,
      maxBytes: env.CROSSGRAIN_UPLOAD_MAX_BYTES,
      onGroup: (done, total) => {
        void updateIntake(uploader.id, start.versionId, { stage: 'storing', percent: 90 + Math.floor((done / total) * 9) }).catch(() => {});
      },
    });
    const outcome = await storeStagedVersion(
      appSequelize, (work) => withIdentity(uploader.id, work), uploader, start, read, groups, keeping, partFile,
      () => void updateIntake(uploader.id, start.versionId, {}).catch(() => {}),
    );
    if (outcome.kind === 'refused') {
      const regime = env.CROSSGRAIN_PRIVACY_REGIME;
      const reasons = outcome.review.refusals.map((r) => ({ code: 'identifier-screen', column: r.column, rules: r.rules, categories: r.categories, message: r.message, regime }));
      await refuseIntake(uploader, start, reasons, 'screening', { droppedColumns: read.droppedColumns, keep: keeping.keep, keepReason: keeping.reason });
    }
  } finally {
    // The raw bytes are in the database now, or nothing was kept: either way the partial file goes.
    await rm(partFile, { force: true });
  }
}

/** Cancels an upload that is still being processed; a no-op answer when it already ended. */
export async function cancelIntake(transaction: Transaction, uploader: Uploader, extractId: string, versionId: string): Promise<boolean> {
  const intake = await ExtractIntake.findOne({
    attributes: ['id', 'status', 'initiativeId'], where: { id: versionId, extractId }, lock: transaction.LOCK.UPDATE, transaction,
  });
  if (!intake) throw notFound('That upload');
  if (intake.status !== 'processing') return false;
  await ExtractIntake.update(
    { status: 'failed', reasons: [{ code: 'cancelled', message: 'Cancelled by the uploader. Nothing was kept.' }], finishedAt: fn('now') },
    { where: { id: versionId }, transaction },
  );
  await recordAudit(transaction, {
    action: 'extract.upload-cancelled', actorId: uploader.id, subjectType: 'extract', subjectId: extractId,
    initiativeId: intake.initiativeId, clientAddress: uploader.clientAddress, details: { versionId },
  });
  return true;
}

