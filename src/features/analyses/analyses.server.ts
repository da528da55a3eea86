/**
 * Analyses in the database: a question and its engine specification, pinned to one
 * confirmed extract version. Analysts create and change them; every member reads them.
 */
import { QueryTypes, type Transaction } from 'sequelize';
import type { Spec } from '../../engine/boundary/schemas';
import { sequelize } from '../../lib/server/db';
import { conflict, notFound, unprocessable } from '../../lib/server/errors';
import { recordAudit } from '../audit/audit.server';
import { levelsLeftIn } from '../extracts/engineData';
import type { ColumnProfile, DictionaryEntry } from '../extracts/extracts.schema';
import type { AnalysisBody } from './analysisApi.schema';

export interface Actor {
  id: string;
  clientAddress: string;
}

export interface AnalysisView {
  id: string;
  initiativeId: string;
  extractVersionId: string;
  extract: { id: string; name: string; version: number; sha256: string; rows: number; uploadedAt: string; archived: boolean };
  title: string;
  question: string;
  prespecified: boolean;
  prespecifiedAt: string | null;
  spec: Spec;
  createdBy: { id: string; name: string };
  createdAt: string;
  updatedAt: string;
  runCount: number;
  latestRun: { id: string; status: string; queuedAt: string } | null;
}

interface VersionRow {
  id: string;
  extract_id: string;
  initiative_id: string;
  status: string;
  dictionary: DictionaryEntry[] | null;
  profile: ColumnProfile[];
  archived_at: Date | null;
}

/** The confirmed extract version an analysis may pin; 422 when it is not usable. */
async function usableVersion(transaction: Transaction, initiativeId: string, versionId: string): Promise<VersionRow> {
  const [version] = await sequelize.query<VersionRow>(
    `SELECT v.id, v.extract_id, v.initiative_id, v.status, v.dictionary, v.profile, e.archived_at
       FROM extract_versions v JOIN extracts e ON e.id = v.extract_id WHERE v.id = :id`,
    { replacements: { id: versionId }, type: QueryTypes.SELECT, transaction },
  );
  if (!version || version.initiative_id !== initiativeId) {
    throw unprocessable('extract-version-unknown', 'That extract version is not in this initiative.', [{ path: 'extractVersionId', message: 'Choose an extract version of this initiative.' }]);
  }
  if (version.status !== 'ready' || !version.dictionary) {
    throw unprocessable('extract-version-not-ready', 'That extract version has not been confirmed yet.', [{ path: 'extractVersionId', message: 'Confirm the version’s dictionary first.' }]);
  }
  return version;
}

/**
 * Checks the specification against the version's confirmed dictionary: every column
 * exists, has a type that fits its role, and every reference level occurs in the data.
 * The engine checks the rest when it runs.
 */
export function checkSpecAgainstDictionary(spec: Spec, dictionary: readonly DictionaryEntry[], profile: readonly ColumnProfile[]): void {
  const problems: { path: string; message: string }[] = [];
  const entry = (name: string) => dictionary.find((d) => d.name === name);
  const levels = (name: string) => {
    const found = profile.find((p) => p.name === name)?.levels;
    return found ? levelsLeftIn(found.map((l) => l.value), entry(name)?.missingValues) : null;
  };
  const need = (path: string, name: string, allowed: DictionaryEntry['type'][], role: string) => {
    const found = entry(name);
    if (!found) problems.push({ path, message: `There is no column “${name}” in this extract version.` });
    else if (!allowed.includes(found.type)) problems.push({ path, message: `“${name}” is ${found.type}; the ${role} must be ${allowed.join(' or ')}.` });
  };
  const reference = (path: string, name: string, value: string | undefined) => {
    const known = levels(name);
    if (value === undefined) {
      problems.push({ path, message: `Choose the reference level of “${name}”.` });
      return;
    }
    if (known && !known.includes(value)) problems.push({ path, message: `“${value}” is not a level of “${name}” (levels: ${known.slice(0, 8).join(', ')}).` });
  };
  need('spec.outcome.column', spec.outcome.column, spec.outcome.type === 'binary' ? ['binary'] : ['continuous', 'count'], `${spec.outcome.type} outcome`);
  need('spec.exposure.column', spec.exposure.column, ['binary', 'categorical'], 'intervention');
  reference('spec.exposure.reference', spec.exposure.column, spec.exposure.reference);
  if (spec.modifier.type === 'categorical') {
    need('spec.modifier.column', spec.modifier.column, ['binary', 'categorical', 'count'], 'categorical modifier');
    reference('spec.modifier.reference', spec.modifier.column, spec.modifier.reference);
  } else {
    need('spec.modifier.column', spec.modifier.column, ['continuous', 'count'], 'continuous modifier');
  }
  const used = new Set([spec.outcome.column, spec.exposure.column, spec.modifier.column]);
  spec.covariates.forEach((c, i) => {
    if (used.has(c.column)) problems.push({ path: `spec.covariates.${i}.column`, message: `“${c.column}” already has a role in this analysis.` });
    used.add(c.column);
    need(`spec.covariates.${i}.column`, c.column, c.type === 'categorical' ? ['binary', 'categorical', 'count'] : ['continuous', 'count', 'binary'], `${c.type} covariate`);
    if (c.type === 'categorical' && c.reference !== undefined) reference(`spec.covariates.${i}.reference`, c.column, c.reference);
  });
  if (spec.outcome.type === 'binary' && spec.model === 'linear') problems.push({ path: 'spec.model', message: 'A binary outcome needs a logistic, log-binomial or modified Poisson model.' });
  if (spec.outcome.type === 'continuous' && spec.model !== 'linear') problems.push({ path: 'spec.model', message: 'A continuous outcome needs the linear model.' });
  if (problems.length) throw unprocessable('spec-invalid', problems[0].message, problems);
}

export async function createAnalysis(transaction: Transaction, actor: Actor, body: AnalysisBody): Promise<{ id: string }> {
  const version = await usableVersion(transaction, body.initiativeId, body.extractVersionId);
  if (version.archived_at) throw conflict('That extract is archived; restore it or choose another before creating an analysis.');
  checkSpecAgainstDictionary(body.spec, version.dictionary ?? [], version.profile);
  const [row] = await sequelize.query<{ id: string }>(
    `INSERT INTO analyses (initiative_id, extract_version_id, title, question, prespecified, prespecified_at, spec, created_by, updated_by)
     VALUES (:initiativeId, :extractVersionId, :title, :question, :prespecified, :prespecifiedAt, CAST(:spec AS jsonb), :actor, :actor)
     RETURNING id`,
    {
      replacements: { ...body, prespecifiedAt: body.prespecified ? new Date() : null, spec: JSON.stringify(body.spec), actor: actor.id },
      type: QueryTypes.SELECT,
      transaction,
    },
  );
  await recordAudit(transaction, {
    action: 'analysis.created', actorId: actor.id, subjectType: 'analysis', subjectId: row.id, initiativeId: body.initiativeId,
    clientAddress: actor.clientAddress,
    details: { title: body.title, extractVersionId: body.extractVersionId, prespecified: body.prespecified, spec: body.spec },
  });
  return row;
}

/** Changes an analysis. Its runs keep the specification they ran with. */
export async function updateAnalysis(transaction: Transaction, actor: Actor, analysisId: string, body: AnalysisBody): Promise<void> {
  const [current] = await sequelize.query<{ initiative_id: string; spec: Spec; prespecified: boolean; prespecified_at: Date | null; extract_version_id: string }>(
    'SELECT initiative_id, spec, prespecified, prespecified_at, extract_version_id FROM analyses WHERE id = :id FOR UPDATE',
    { replacements: { id: analysisId }, type: QueryTypes.SELECT, transaction },
  );
  if (!current || current.initiative_id !== body.initiativeId) throw notFound('That analysis');
  const version = await usableVersion(transaction, body.initiativeId, body.extractVersionId);
  checkSpecAgainstDictionary(body.spec, version.dictionary ?? [], version.profile);
  // The declaration time stays the first one; turning prespecification on later stamps now.
  const prespecifiedAt = body.prespecified ? (current.prespecified_at ?? new Date()) : null;
  await sequelize.query(
    `UPDATE analyses SET title = :title, question = :question, prespecified = :prespecified, prespecified_at = :prespecifiedAt,
            spec = CAST(:spec AS jsonb), extract_version_id = :extractVersionId, updated_by = :actor, updated_at = now() WHERE id = :id`,
    { replacements: { ...body, prespecifiedAt, spec: JSON.stringify(body.spec), actor: actor.id, id: analysisId }, transaction },
  );
  await recordAudit(transaction, {
    action: 'analysis.changed', actorId: actor.id, subjectType: 'analysis', subjectId: analysisId, initiativeId: body.initiativeId,
    clientAddress: actor.clientAddress,
    details: { before: { spec: current.spec, extractVersionId: current.extract_version_id, prespecified: current.prespecified }, after: { spec: body.spec, extractVersionId: body.extractVersionId, prespecified: body.prespecified } },
  });
}

const SELECT_ANALYSIS = `
  SELECT a.id, a.initiative_id, a.extract_version_id, a.title, a.question, a.prespecified, a.prespecified_at, a.spec,
         a.created_by, u.display_name AS creator, a.created_at, a.updated_at,
         v.extract_id, e.name AS extract_name, v.version_number, v.sha256, v.row_count, v.uploaded_at, e.archived_at,
         (SELECT count(*) FROM runs r WHERE r.analysis_id = a.id) AS run_count,
         (SELECT json_build_object('id', r.id, 'status', r.status, 'queuedAt', r.queued_at) FROM runs r
           WHERE r.analysis_id = a.id ORDER BY r.queued_at DESC LIMIT 1) AS latest_run
    FROM analyses a
    JOIN users u ON u.id = a.created_by
    JOIN extract_versions v ON v.id = a.extract_version_id
    JOIN extracts e ON e.id = v.extract_id`;

interface AnalysisRow {
  id: string; initiative_id: string; extract_version_id: string; title: string; question: string; prespecified: boolean;
  prespecified_at: Date | null; spec: Spec; created_by: string; creator: string; created_at: Date; updated_at: Date;
  extract_id: string; extract_name: string; version_number: number; sha256: string; row_count: number; uploaded_at: Date;
  archived_at: Date | null; run_count: string; latest_run: AnalysisView['latestRun'];
}

const iso = (d: Date | string) => new Date(d).toISOString();

function toView(r: AnalysisRow): AnalysisView {
  return {
    id: r.id,
    initiativeId: r.initiative_id,
    extractVersionId: r.extract_version_id,
    extract: { id: r.extract_id, name: r.extract_name, version: r.version_number, sha256: r.sha256, rows: r.row_count, uploadedAt: iso(r.uploaded_at), archived: Boolean(r.archived_at) },
    title: r.title,
    question: r.question,
    prespecified: r.prespecified,
    prespecifiedAt: r.prespecified_at ? iso(r.prespecified_at) : null,
    spec: r.spec,
    createdBy: { id: r.created_by, name: r.creator },
    createdAt: iso(r.created_at),
    updatedAt: iso(r.updated_at),
    runCount: Number(r.run_count),
    latestRun: r.latest_run ? { ...r.latest_run, queuedAt: iso(r.latest_run.queuedAt) } : null,
  };
}

export async function getAnalysis(transaction: Transaction, analysisId: string): Promise<AnalysisView | null> {
  const [row] = await sequelize.query<AnalysisRow>(`${SELECT_ANALYSIS} WHERE a.id = :id`, {
    replacements: { id: analysisId }, type: QueryTypes.SELECT, transaction,
  });
  return row ? toView(row) : null;
}

export async function listAnalyses(transaction: Transaction, initiativeId: string): Promise<AnalysisView[]> {
  const rows = await sequelize.query<AnalysisRow>(`${SELECT_ANALYSIS} WHERE a.initiative_id = :id ORDER BY a.updated_at DESC`, {
    replacements: { id: initiativeId }, type: QueryTypes.SELECT, transaction,
  });
  return rows.map(toView);
}

/** The confirmed versions an analysis may pin, with their dictionaries and profiles. */
export async function analysableVersions(transaction: Transaction, initiativeId: string) {
  return sequelize.query<{ id: string; extract_id: string; name: string; version_number: number; row_count: number; dictionary: DictionaryEntry[]; profile: ColumnProfile[] }>(
    `SELECT v.id, v.extract_id, e.name, v.version_number, v.row_count, v.dictionary, v.profile
       FROM extract_versions v JOIN extracts e ON e.id = v.extract_id
      WHERE v.initiative_id = :id AND v.status = 'ready' AND e.archived_at IS NULL
      ORDER BY e.name, v.version_number DESC`,
    { replacements: { id: initiativeId }, type: QueryTypes.SELECT, transaction },
  );
}
