/**
 * Analyses in the database: a question and its engine specification, pinned to one
 * confirmed extract version. Analysts create and change them; every member reads them.
 */
import { QueryTypes, type Transaction } from 'sequelize';
import { Analysis, Extract, ExtractVersion } from '../../../db/models';
import type { AnySpec, Spec } from '@/engine/boundary/schemas';
import { validateScreenSpec } from '@/engine/analysis/validateSpec';
import { InvalidSpecError } from '@/engine/errors';
import { sequelize } from '@/lib/server/db';
import { conflict, notFound, unprocessable } from '@/lib/server/errors';
import { recordAudit } from '../audit/audit.server';
import { levelsLeftIn } from '../extracts/engineData';
import type { ColumnProfile, DictionaryEntry } from '../extracts/extracts.schema';
import type { AnalysisBody } from './analysisApi.schema';
import { doseProblems, orderedProblems } from './doseRules';
import { screenModifierSpec, isScreenSpec } from './screenSpecs';
import { specRuleProblems } from './specRules';

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
  const found = await ExtractVersion.findByPk(versionId, {
    attributes: ['id', 'extractId', 'initiativeId', 'status', 'dictionary', 'profile'],
    include: [{ model: Extract, as: 'extract', attributes: ['archivedAt'], required: true }],
    transaction,
  });
  // jsonb as the extracts area confirmed and stored it.
  const version: VersionRow | null = found?.extract
    ? {
        id: found.id, extract_id: found.extractId, initiative_id: found.initiativeId, status: found.status,
        dictionary: found.dictionary as DictionaryEntry[] | null, profile: found.profile as ColumnProfile[], archived_at: found.extract.archivedAt,
      }
    : null;
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
export function checkSpecAgainstDictionary(spec: AnySpec, dictionary: readonly DictionaryEntry[], profile: readonly ColumnProfile[]): void {
  if (isScreenSpec(spec)) {
    // The list itself (distinct columns, none the intervention, outcome or a covariate), as the engine checks it.
    try {
      validateScreenSpec(spec);
    } catch (error) {
      if (error instanceof InvalidSpecError) throw unprocessable('spec-invalid', error.message, [{ path: 'spec.modifiers', message: error.message }]);
      throw error;
    }
  }
  // A subgroup screen: each modifier's own analysis, with its problems placed under that modifier.
  const problems = isScreenSpec(spec)
    ? spec.modifiers.flatMap((_, index) =>
        singleSpecProblems(screenModifierSpec(spec, index), dictionary, profile).map((problem) => ({ ...problem, path: problem.path.replace(/^spec\.modifier\b/, `spec.modifiers.${index}`) })),
      )
    : singleSpecProblems(spec as Spec, dictionary, profile);
  if (problems.length) throw unprocessable('spec-invalid', problems[0].message, problems);
}

function singleSpecProblems(spec: Spec, dictionary: readonly DictionaryEntry[], profile: readonly ColumnProfile[]): { path: string; message: string }[] {
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
  need('spec.outcome.column', spec.outcome.column, spec.outcome.type === 'binary' ? ['binary'] : spec.outcome.type === 'count' ? ['count'] : ['continuous', 'count'], `${spec.outcome.type} outcome`);
  // Person-time, clusters and weights: the columns exist with a fitting type (their values
  // are checked again when the analysis runs: positive person-time, positive whole weights).
  if (spec.outcome.personTime !== undefined) need('spec.outcome.personTime', spec.outcome.personTime, ['continuous', 'count'], 'person-time');
  if (spec.cluster !== undefined) need('spec.cluster.column', spec.cluster.column, ['binary', 'categorical', 'count'], 'cluster column');
  if (spec.weights !== undefined) need('spec.weights.column', spec.weights.column, ['count'], 'frequency-weights column');
  if (spec.exposure.type === 'continuous') {
    need('spec.exposure.column', spec.exposure.column, ['continuous', 'count'], 'continuous intervention (a dose)');
    problems.push(...doseProblems(spec));
  } else {
    need('spec.exposure.column', spec.exposure.column, ['binary', 'categorical'], 'intervention');
    reference('spec.exposure.reference', spec.exposure.column, spec.exposure.reference);
  }
  if (spec.modifier.type === 'categorical') {
    need('spec.modifier.column', spec.modifier.column, ['binary', 'categorical', 'count'], 'categorical modifier');
    reference('spec.modifier.reference', spec.modifier.column, spec.modifier.reference);
    problems.push(...orderedProblems(spec, entry(spec.modifier.column)?.ordered?.scores ?? null, levels(spec.modifier.column)));
  } else {
    problems.push(...orderedProblems(spec, null, null));
    need('spec.modifier.column', spec.modifier.column, ['continuous', 'count'], 'continuous modifier');
  }
  const used = new Set([spec.outcome.column, spec.exposure.column, spec.modifier.column]);
  spec.covariates.forEach((c, i) => {
    if (used.has(c.column)) problems.push({ path: `spec.covariates.${i}.column`, message: `“${c.column}” already has a role in this analysis.` });
    used.add(c.column);
    need(`spec.covariates.${i}.column`, c.column, c.type === 'categorical' ? ['binary', 'categorical', 'count'] : ['continuous', 'count', 'binary'], `${c.type} covariate`);
    if (c.type === 'categorical' && c.reference !== undefined) reference(`spec.covariates.${i}.reference`, c.column, c.reference);
  });
  // The same rule check as the form's validation and summary panel.
  problems.push(...specRuleProblems(spec));
  return problems;
}

export async function createAnalysis(transaction: Transaction, actor: Actor, body: AnalysisBody): Promise<{ id: string }> {
  const version = await usableVersion(transaction, body.initiativeId, body.extractVersionId);
  if (version.archived_at) throw conflict('That extract is archived; restore it or choose another before creating an analysis.');
  checkSpecAgainstDictionary(body.spec, version.dictionary ?? [], version.profile);
  const row = await Analysis.create(
    {
      initiativeId: body.initiativeId, extractVersionId: body.extractVersionId, title: body.title, question: body.question,
      prespecified: body.prespecified, prespecifiedAt: body.prespecified ? new Date() : null, spec: body.spec,
      createdBy: actor.id, updatedBy: actor.id,
    },
    { transaction },
  );
  await recordAudit(transaction, {
    action: 'analysis.created', actorId: actor.id, subjectType: 'analysis', subjectId: row.id, initiativeId: body.initiativeId,
    clientAddress: actor.clientAddress,
    details: { title: body.title, extractVersionId: body.extractVersionId, prespecified: body.prespecified, spec: body.spec },
  });
  return { id: row.id };
}

/** Changes an analysis. Its runs keep the specification they ran with. */
export async function updateAnalysis(transaction: Transaction, actor: Actor, analysisId: string, body: AnalysisBody): Promise<void> {
  const analysis = await Analysis.findByPk(analysisId, {
    attributes: ['id', 'initiativeId', 'spec', 'prespecified', 'prespecifiedAt', 'extractVersionId'],
    lock: transaction.LOCK.UPDATE,
    transaction,
  });
  if (!analysis || analysis.initiativeId !== body.initiativeId) throw notFound('That analysis');
  const before = { spec: analysis.spec, extractVersionId: analysis.extractVersionId, prespecified: analysis.prespecified };
  const version = await usableVersion(transaction, body.initiativeId, body.extractVersionId);
  checkSpecAgainstDictionary(body.spec, version.dictionary ?? [], version.profile);
  // The declaration time stays the first one; turning prespecification on later stamps now.
  const prespecifiedAt = body.prespecified ? (analysis.prespecifiedAt ?? new Date()) : null;
  analysis.set({
    title: body.title, question: body.question, prespecified: body.prespecified, prespecifiedAt, spec: body.spec,
    extractVersionId: body.extractVersionId, updatedBy: actor.id,
  });
  // Saved even when nothing changed, as before: the change is stamped and audited.
  analysis.changed('updatedBy', true);
  await analysis.save({ transaction });
  await recordAudit(transaction, {
    action: 'analysis.changed', actorId: actor.id, subjectType: 'analysis', subjectId: analysisId, initiativeId: body.initiativeId,
    clientAddress: actor.clientAddress,
    details: { before, after: { spec: body.spec, extractVersionId: body.extractVersionId, prespecified: body.prespecified } },
  });
}

// A count and the latest run per analysis beside a four-table join: a reporting query, raw SQL.
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
  const versions = await ExtractVersion.findAll({
    attributes: ['id', 'extractId', 'versionNumber', 'rowCount', 'dictionary', 'profile'],
    where: { initiativeId, status: 'ready' },
    include: [{ model: Extract, as: 'extract', attributes: ['name'], where: { archivedAt: null }, required: true }],
    order: [[{ model: Extract, as: 'extract' }, 'name', 'ASC'], ['versionNumber', 'DESC']],
    transaction,
  });
  // jsonb as the extracts area confirmed and stored it.
  return versions.map((v) => ({
    id: v.id, extract_id: v.extractId, name: v.extract?.name ?? '', version_number: v.versionNumber, row_count: v.rowCount,
    dictionary: v.dictionary as DictionaryEntry[], profile: v.profile as ColumnProfile[],
  }));
}
