/**
 * Stored extracts: writing a version with its columns in one transaction, confirming its
 * dictionary, archiving, and reading extracts, versions and upload attempts. Receiving an
 * upload is intake.server.ts; loading columns is columns.server.ts.
 */
import { QueryTypes, fn, type Sequelize, type Transaction } from 'sequelize';
import { Extract, ExtractIntake, ExtractVersion, User } from '../../../db/models';
import { sequelize as appSequelize } from '@/lib/server/db';
import { env, privacyRegime } from '@/lib/server/env';
import { conflict, notFound, unprocessable } from '@/lib/server/errors';
import { recordAudit } from '../audit/audit.server';
import { encodeColumn } from './columnStore';
import { isMissingToken } from '@/engine/design/missingValues';
import { levelsLeftIn, missingCodeKey } from './engineData';
import { declaredOrder } from './orderedScores';
import type { ReadExtract } from './extracts';
import type { ColumnProfile, DictionaryEntry, KeptColumn } from './extracts.schema';
import type { Finding } from './identifierFindings';
import type { PrivacyRegime } from '@/lib/privacyRegime';

/** The statement an analyst signs before a version becomes ready, in the deployment's privacy regime. */
export function attestationStatement(): string {
  return privacyRegime().attestation;
}

/** An intake that has not reported for this long is treated as failed (its server stopped). */
export const INTAKE_STALE_MS = 120_000;

export interface Uploader {
  id: string;
  clientAddress: string;
}

/** What an upload is about to become: written by the intake, stored by storeVersion. */
export interface IntakeStart {
  initiativeId: string;
  extractId: string;
  versionId: string;
  name: string;
  newExtract: boolean;
}

/** A name finding the uploader overrode, as stored in the version's findings. */
export type StoredKeep = Finding & { kept: { reason: string; by: string; at: string } };

function isStoredKeep(value: unknown): value is StoredKeep {
  return typeof value === 'object' && value !== null && 'kept' in value && 'column' in value;
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
  hooks: { afterColumn?: (position: number) => Promise<void>; kept?: readonly StoredKeep[] } = {},
): Promise<boolean> {
  const kept = read.columns.filter((c) => c.kind === 'numeric' || !c.levelsOverflowed);
  const next = await openVersion(transaction, uploader, start, read, profile, findings, kept.length);
  if (next === null) return false;
  // Bulk column storage: each column's values as one bytea, bound as it is (raw SQL on the caller's connection).
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
  await closeVersion(transaction, uploader, start, read, next, kept.length, hooks.kept ?? []);
  return true;
}

/**
 * The first half of storing a version: checks that the intake is still processing
 * (locking it, so a cancel waits for the end), writes the extract when new and the
 * version, and returns the version's number; null (writing nothing) when the intake was
 * cancelled meanwhile. The columns are written next, then {@link closeVersion}. With
 * `checkIntake: false` the caller checks the intake itself, later (see
 * {@link intakeStillProcessing}), so that the intake is not locked while it stores.
 */
export async function openVersion(
  transaction: Transaction,
  uploader: Uploader,
  start: IntakeStart,
  read: ReadExtract,
  profile: ColumnProfile[],
  findings: unknown[],
  columnCount: number,
  options: { checkIntake?: boolean } = {},
): Promise<number | null> {
  if (options.checkIntake !== false && !(await intakeStillProcessing(transaction, start.versionId))) return null;
  if (start.newExtract) {
    await Extract.create({ id: start.extractId, initiativeId: start.initiativeId, name: start.name, createdBy: uploader.id }, { transaction });
  }
  // Serialise version numbers per extract.
  await Extract.findByPk(start.extractId, { attributes: ['id'], lock: transaction.LOCK.UPDATE, transaction });
  const next = Number((await ExtractVersion.max<number | null, ExtractVersion>('versionNumber', { where: { extractId: start.extractId }, transaction })) ?? 0) + 1;
  await ExtractVersion.create(
    {
      id: start.versionId, extractId: start.extractId, initiativeId: start.initiativeId, versionNumber: next, status: 'needs-review',
      sha256: read.read.sha256, byteCount: read.read.byteCount, rowCount: read.read.recordCount, columnCount,
      delimiter: read.read.delimiter, uploadedBy: uploader.id, profile, findings, droppedColumns: [...read.droppedColumns],
    },
    { transaction },
  );
  return next;
}

/** Locks the intake record (a cancel then waits for the transaction's end) and tells whether it is still processing. */
export async function intakeStillProcessing(transaction: Transaction, versionId: string): Promise<boolean> {
  const intake = await ExtractIntake.findByPk(versionId, { attributes: ['id', 'status'], lock: transaction.LOCK.UPDATE, transaction });
  return intake?.status === 'processing';
}

/** The second half of storing a version: marks the intake stored and records the audit event. */
export async function closeVersion(
  transaction: Transaction,
  uploader: Uploader,
  start: IntakeStart,
  read: ReadExtract,
  version: number,
  columnCount: number,
  kept: readonly StoredKeep[],
): Promise<void> {
  await ExtractIntake.update(
    { status: 'stored', stage: 'storing', percent: 100, byteCount: read.read.byteCount, finishedAt: fn('now'), heartbeatAt: fn('now') },
    { where: { id: start.versionId }, transaction },
  );
  await recordAudit(transaction, {
    action: start.newExtract ? 'extract.uploaded' : 'extract.version-added',
    actorId: uploader.id, subjectType: 'extract', subjectId: start.extractId, initiativeId: start.initiativeId,
    clientAddress: uploader.clientAddress,
    details: {
      versionId: start.versionId, version, name: start.name, sha256: read.read.sha256, rows: read.read.recordCount, columns: columnCount,
      droppedColumns: [...read.droppedColumns], privacyRegime: env.CROSSGRAIN_PRIVACY_REGIME,
      keptColumns: kept.map((k) => ({ column: k.column, rule: k.rule, category: k.category, reason: k.kept.reason })),
    },
  });
}

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
  /** `regime` is absent on versions signed before the privacy regime was a setting. */
  attestation?: { signedName: string; signedAt: string; statement: string; userId: string; regime?: PrivacyRegime } | null;
  droppedColumns?: string[];
  /** Columns flagged by their name alone that the uploader kept, with the reason. */
  keptColumns?: KeptColumn[];
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
  // A fresh include per query: Sequelize rewrites the include options it is given.
  const uploader = () => ({ model: User, as: 'uploader', attributes: ['displayName'], required: true });
  const intakes = await ExtractIntake.findAll({
    attributes: ['id', 'initiativeId', 'name', 'status', 'stage', 'percent', 'reasons', 'uploadedBy', 'createdAt', 'heartbeatAt', 'byteCount'],
    where: { extractId },
    include: [uploader()],
    order: [['createdAt', 'DESC']],
    transaction,
  });
  const extract = await Extract.findByPk(extractId, { attributes: ['id', 'initiativeId', 'name', 'createdAt', 'archivedAt'], transaction });
  const versions = await ExtractVersion.findAll({
    attributes: [
      'id', 'versionNumber', 'status', 'sha256', 'rowCount', 'columnCount', 'byteCount', 'uploadedBy', 'uploadedAt',
      ...(options.withProfiles ? ['profile' as const] : []), 'findings', 'dictionary', 'attestation', 'droppedColumns',
    ],
    where: { extractId },
    include: [uploader()],
    order: [['versionNumber', 'DESC']],
    transaction,
  });
  const storedIds = new Set(versions.map((v) => v.id));
  const open = intakes.filter((i) => i.status !== 'stored' && !storedIds.has(i.id));
  if (!extract && open.length === 0) return null;
  const pending: VersionView[] = open.map((i) => {
    const stale = i.status === 'processing' && Date.now() - new Date(i.heartbeatAt).getTime() > INTAKE_STALE_MS;
    return {
      versionId: i.id,
      version: null,
      status: stale ? 'failed' : i.status === 'stored' ? 'ready' : i.status,
      stage: i.stage,
      percent: Math.round(i.percent),
      reasons: stale ? [{ code: 'processing-stopped', message: 'Processing stopped (the server restarted). Nothing was kept; upload the file again.' }] : i.reasons,
      sha256: null, rows: null, columns: null, bytes: i.byteCount === null ? null : Number(i.byteCount),
      uploadedBy: { id: i.uploadedBy, name: i.uploader?.displayName ?? '' },
      uploadedAt: iso(i.createdAt),
    };
  });
  // jsonb as storeVersion and confirmVersion wrote it.
  const stored: VersionView[] = versions.map((v) => ({
    versionId: v.id,
    version: v.versionNumber,
    status: v.status,
    sha256: v.sha256,
    rows: v.rowCount,
    columns: v.columnCount,
    bytes: Number(v.byteCount),
    uploadedBy: { id: v.uploadedBy, name: v.uploader?.displayName ?? '' },
    uploadedAt: iso(v.uploadedAt),
    findings: v.findings,
    ...(options.withProfiles ? { profile: v.profile as ColumnProfile[] } : {}),
    dictionary: v.dictionary as DictionaryEntry[] | null,
    attestation: v.attestation as VersionView['attestation'],
    droppedColumns: v.droppedColumns,
    keptColumns: (Array.isArray(v.findings) ? v.findings : []).filter(isStoredKeep).map((k) => ({
      column: k.column, rule: k.rule, category: k.category, message: k.message, reason: k.kept.reason,
      keptBy: { id: k.kept.by, name: k.kept.by === v.uploadedBy ? (v.uploader?.displayName ?? '') : '' }, keptAt: k.kept.at,
    })),
  }));
  const first = intakes[intakes.length - 1];
  return {
    id: extractId,
    initiativeId: extract?.initiativeId ?? first.initiativeId,
    name: extract?.name ?? first.name,
    createdAt: iso(extract?.createdAt ?? first.createdAt),
    archivedAt: extract?.archivedAt ? iso(extract.archivedAt) : null,
    versions: [...pending, ...stored].sort((a, b) => b.uploadedAt.localeCompare(a.uploadedAt)),
  };
}

/**
 * The initiative an extract (or an upload that never became one) belongs to, as the
 * caller may see it; null otherwise. Enough to authorise an action without reading the
 * whole extract.
 */
export async function extractScope(transaction: Transaction, extractId: string): Promise<{ initiativeId: string } | null> {
  const row =
    (await Extract.findByPk(extractId, { attributes: ['initiativeId'], transaction })) ??
    (await ExtractIntake.findOne({ attributes: ['initiativeId'], where: { extractId }, transaction }));
  return row ? { initiativeId: row.initiativeId } : null;
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
  // The latest version of each extract through a lateral join: a reporting query, raw SQL.
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
  const version = await ExtractVersion.findOne({
    attributes: ['id', 'status', 'profile', 'initiativeId', 'sha256', 'versionNumber'],
    where: { id: versionId, extractId },
    lock: transaction.LOCK.UPDATE,
    transaction,
  });
  if (!version) throw notFound('That version');
  if (version.status === 'ready') throw conflict('This version is already confirmed; a confirmed version never changes. Upload a new version instead.');
  const dictionary = buildDictionary(version.profile as ColumnProfile[], body.columns);
  const attestation = {
    signedName: body.attestation.signedName, signedAt: new Date().toISOString(), statement: attestationStatement(), userId: actor.id,
    regime: env.CROSSGRAIN_PRIVACY_REGIME,
  };
  await ExtractVersion.update(
    { status: 'ready', dictionary, attestation, confirmedBy: actor.id, confirmedAt: fn('now') },
    { where: { id: versionId }, transaction },
  );
  await recordAudit(transaction, {
    action: 'extract.confirmed', actorId: actor.id, subjectType: 'extract', subjectId: extractId, initiativeId: version.initiativeId,
    clientAddress: actor.clientAddress,
    details: {
      versionId, version: version.versionNumber, sha256: version.sha256, signedName: body.attestation.signedName, corrected: Boolean(body.columns),
      privacyRegime: env.CROSSGRAIN_PRIVACY_REGIME,
      missingValues: Object.fromEntries(dictionary.filter((d) => (d.missingValues ?? []).length > 0).map((d) => [d.name, d.missingValues])),
      ordered: Object.fromEntries(dictionary.filter((d) => d.ordered).map((d) => [d.name, d.ordered?.scores])),
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
    const unit = entry.unit?.trim();
    const ordered = declaredOrder(p, entry, missingValues, `columns.${index}.ordered`, problems);
    return { name: p.name, type: entry.type, description: entry.description ?? '', missingValues, ...(unit ? { unit } : {}), ...(ordered ? { ordered } : {}) };
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
  const extract = await Extract.findByPk(extractId, { attributes: ['id', 'initiativeId', 'archivedAt'], lock: transaction.LOCK.UPDATE, transaction });
  if (!extract) throw notFound('That extract');
  if (Boolean(extract.archivedAt) === archived) return;
  await Extract.update({ archivedAt: archived ? new Date() : null, archivedBy: archived ? actor.id : null }, { where: { id: extractId }, transaction });
  await recordAudit(transaction, {
    action: archived ? 'extract.archived' : 'extract.restored', actorId: actor.id, subjectType: 'extract', subjectId: extractId,
    initiativeId: extract.initiativeId, clientAddress: actor.clientAddress,
  });
}

