/**
 * Briefs in the database: an analyst drafts a brief from a signed-off run, edits it while
 * it is a draft, and publishes it as numbered immutable versions (content, HTML, PDF and
 * the PDF's SHA-256); corrections are new versions with a note; a retraction marks every
 * version with its reason. Everything runs in the caller's transaction under row-level
 * security (policies/rls/009_briefs.sql) and is audited there.
 */
import { createHash } from 'node:crypto';
import { QueryTypes, type Transaction } from 'sequelize';
import type { Result, Spec } from '@/engine/boundary/schemas';
import { dateTimeInWords } from '@/lib/dates';
import { isScreenSpec } from '@/features/analyses/screenSpecs';
import { sequelize } from '@/lib/server/db';
import { conflict, notFound } from '@/lib/server/errors';
import { recordAudit } from '../audit/audit.server';
import { reviewOf } from '../review/review.server';
import { getRun } from '../runs/runs.server';
import { credibilityOf } from '@/features/credibility/credibility.server';
import { credibilityParagraph } from '@/features/credibility/credibilityWords';
import { buildBriefContent, type BriefContent, type BriefFacts, type PlotChoice } from './briefContent';
import { renderBriefHtml } from './briefHtml';
import { renderBriefPdf, type PageSize } from './briefPdf';
import type { BriefState, BriefView, CorrectionBody, NewBriefBody, UpdateBriefBody } from './briefs.schema';
import { notifyBriefPublished } from '../notifications/notifications.server';

export interface Actor {
  id: string;
  name: string;
  clientAddress: string;
}

/** A brief's own row. */
export interface BriefRecord {
  id: string; initiativeId: string; runId: string; analysisId: string; state: BriefState; title: string; summary: string;
  plot: PlotChoice; ownCautions: string[];
}

const iso = (value: Date | string) => new Date(value).toISOString();
/** Dates in the brief's words: "2 December 2026 at 09:14 UTC". */
const utc = (value: Date | string) => dateTimeInWords(value);

/** The initiative's brief settings, or the defaults (threshold 11, A4). */
export async function briefSettings(transaction: Transaction, initiativeId: string): Promise<{ cellThreshold: number; pageSize: PageSize }> {
  const [row] = await sequelize.query<{ cell_threshold: number; page_size: PageSize }>(
    'SELECT cell_threshold, page_size FROM brief_settings WHERE initiative_id = :initiativeId',
    { replacements: { initiativeId }, type: QueryTypes.SELECT, transaction },
  );
  return { cellThreshold: row?.cell_threshold ?? 11, pageSize: row?.page_size ?? 'A4' };
}

/** Saves the initiative's brief settings (analysts). */
export async function saveBriefSettings(transaction: Transaction, actor: Actor, initiativeId: string, settings: { cellThreshold: number; pageSize: PageSize }): Promise<void> {
  await sequelize.query(
    `INSERT INTO brief_settings (initiative_id, cell_threshold, page_size, updated_by) VALUES (:initiativeId, :cellThreshold, :pageSize, :actor)
     ON CONFLICT (initiative_id) DO UPDATE SET cell_threshold = EXCLUDED.cell_threshold, page_size = EXCLUDED.page_size, updated_by = EXCLUDED.updated_by, updated_at = now()`,
    { replacements: { initiativeId, ...settings, actor: actor.id }, transaction },
  );
  await recordAudit(transaction, { action: 'brief.settings-changed', actorId: actor.id, subjectType: 'initiative', subjectId: initiativeId, initiativeId, clientAddress: actor.clientAddress, details: settings });
}

/** Drafts a brief from a run; 409 unless the run is signed off. */
export async function draftBrief(transaction: Transaction, actor: Actor, runId: string, body: NewBriefBody): Promise<string> {
  const run = await getRun(transaction, runId, { withResult: false });
  if (!run) throw notFound('That run');
  if (run.verifiesRunId) throw conflict('A verification re-run is not published; draft the brief from the run it verifies.');
  if (run.reviewState !== 'signed-off') {
    throw conflict(`This run is not signed off (its review is ${run.reviewState.replace('-', ' ')}), so no brief can be drafted from it yet. A clinician signs a submitted run off on its results page.`);
  }
  if (isScreenSpec(run.spec)) {
    throw conflict('A brief presents one modifier: draft it from a full analysis of that modifier (linked from the subgroup screen\'s table), not from the screen itself.');
  }
  const plot: PlotChoice = run.spec.modifier.type === 'continuous' ? 'modifier' : 'forest';
  const [row] = await sequelize.query<{ id: string }>(
    `INSERT INTO briefs (initiative_id, run_id, analysis_id, title, summary, plot, created_by, updated_by)
     VALUES (:initiativeId, :runId, :analysisId, :title, :summary, :plot, :actor, :actor) RETURNING id`,
    { replacements: { initiativeId: run.initiativeId, runId, analysisId: run.analysisId, title: body.title.trim(), summary: body.summary.trim(), plot, actor: actor.id }, type: QueryTypes.SELECT, transaction },
  );
  await recordAudit(transaction, {
    action: 'brief.drafted', actorId: actor.id, subjectType: 'brief', subjectId: row.id, initiativeId: run.initiativeId, clientAddress: actor.clientAddress,
    details: { runId, analysisId: run.analysisId },
  });
  return row.id;
}

/** A brief's row, or null when it does not exist or is not visible. */
export async function getBriefRecord(transaction: Transaction, briefId: string, options: { lock?: boolean } = {}): Promise<BriefRecord | null> {
  const [row] = await sequelize.query<{ id: string; initiative_id: string; run_id: string; analysis_id: string; state: BriefState; title: string; summary: string; plot: PlotChoice; own_cautions: string[] }>(
    `SELECT id, initiative_id, run_id, analysis_id, state, title, summary, plot, own_cautions FROM briefs WHERE id = :briefId${options.lock ? ' FOR UPDATE' : ''}`,
    { replacements: { briefId }, type: QueryTypes.SELECT, transaction },
  );
  return row
    ? { id: row.id, initiativeId: row.initiative_id, runId: row.run_id, analysisId: row.analysis_id, state: row.state, title: row.title, summary: row.summary, plot: row.plot, ownCautions: row.own_cautions }
    : null;
}

/** The brief with its versions, retraction and the newer work on its analysis. */
export async function briefView(transaction: Transaction, briefId: string): Promise<BriefView | null> {
  const [row] = await sequelize.query<{
    id: string; initiative_id: string; run_id: string; analysis_id: string; state: BriefState; title: string; summary: string; plot: PlotChoice;
    own_cautions: string[]; created_by: string; creator: string; created_at: Date; updated_at: Date; retracted_at: Date | null; retracted_by: string | null;
    retractor: string | null; retraction_reason: string | null;
  }>(
    `SELECT b.*, cu.display_name AS creator, ru.display_name AS retractor
       FROM briefs b JOIN users cu ON cu.id = b.created_by LEFT JOIN users ru ON ru.id = b.retracted_by WHERE b.id = :briefId`,
    { replacements: { briefId }, type: QueryTypes.SELECT, transaction },
  );
  if (!row) return null;
  const versions = await sequelize.query<{ version: number; published_at: Date; published_by: string; publisher: string; change_note: string; sha256: string; page_size: string }>(
    `SELECT v.version, v.published_at, v.published_by, u.display_name AS publisher, v.change_note, v.sha256, v.page_size
       FROM brief_versions v JOIN users u ON u.id = v.published_by WHERE v.brief_id = :briefId ORDER BY v.version`,
    { replacements: { briefId }, type: QueryTypes.SELECT, transaction },
  );
  return {
    id: row.id, initiativeId: row.initiative_id, runId: row.run_id, analysisId: row.analysis_id, state: row.state, title: row.title, summary: row.summary,
    plot: row.plot, ownCautions: row.own_cautions, createdBy: { id: row.created_by, name: row.creator }, createdAt: iso(row.created_at), updatedAt: iso(row.updated_at),
    retraction: row.retracted_at && row.retracted_by ? { at: iso(row.retracted_at), by: { id: row.retracted_by, name: row.retractor ?? '' }, reason: row.retraction_reason ?? '' } : null,
    versions: versions.map((v) => ({ version: v.version, publishedAt: iso(v.published_at), publishedBy: { id: v.published_by, name: v.publisher }, changeNote: v.change_note, sha256: v.sha256, pageSize: v.page_size })),
    newerWork: await newerWork(transaction, row.run_id, row.analysis_id),
  };
}

/** Sentences about work on the same analysis after the brief's run: later runs, re-runs, sent-back reviews. */
async function newerWork(transaction: Transaction, runId: string, analysisId: string): Promise<string[]> {
  const [row] = await sequelize.query<{ later: string; reruns: string; sent_back: string }>(
    `SELECT (SELECT count(*) FROM runs r WHERE r.analysis_id = :analysisId AND r.verifies_run_id IS NULL AND r.queued_at > (SELECT queued_at FROM runs WHERE id = :runId)) AS later,
            (SELECT count(*) FROM runs r WHERE r.verifies_run_id = :runId) AS reruns,
            (SELECT count(*) FROM review_steps s JOIN runs r ON r.id = s.run_id WHERE r.analysis_id = :analysisId AND s.kind = 'sent-back'
               AND s.created_at > (SELECT max(created_at) FROM review_steps WHERE run_id = :runId AND kind = 'signed-off')) AS sent_back`,
    { replacements: { runId, analysisId }, type: QueryTypes.SELECT, transaction },
  );
  const out: string[] = [];
  const later = Number(row?.later ?? 0);
  if (later > 0) out.push(`The analysis has been run ${later === 1 ? 'once' : `${later} times`} since this brief's run.`);
  const reruns = Number(row?.reruns ?? 0);
  if (reruns > 0) out.push(`This brief's run has been re-run ${reruns === 1 ? 'once' : `${reruns} times`} to verify it.`);
  if (Number(row?.sent_back ?? 0) > 0) out.push('A later run of the analysis was sent back by a reviewer.');
  return out;
}

/** Builds the content from the brief's run, as it stands now (drafts) or at publication. */
export async function composeContent(transaction: Transaction, brief: BriefRecord): Promise<BriefContent> {
  const run = await getRun(transaction, brief.runId, { withResult: true });
  if (!run || run.status !== 'succeeded' || !run.result) throw notFound('The run of this brief');
  const [facts] = await sequelize.query<{
    analysis_title: string; question: string; prespecified_at: Date | null; initiative_name: string; organisation: string; description: string;
    extract_name: string; version_number: number; analyses: string;
  }>(
    `SELECT a.title AS analysis_title, a.question, a.prespecified_at, i.name AS initiative_name, i.organisation, i.description,
            e.name AS extract_name, v.version_number, (SELECT count(*) FROM analyses x WHERE x.initiative_id = a.initiative_id) AS analyses
       FROM analyses a JOIN initiatives i ON i.id = a.initiative_id
       JOIN extract_versions v ON v.id = :versionId JOIN extracts e ON e.id = v.extract_id
      WHERE a.id = :analysisId`,
    { replacements: { analysisId: brief.analysisId, versionId: run.extractVersionId }, type: QueryTypes.SELECT, transaction },
  );
  if (!facts) throw notFound('The analysis of this brief');
  const review = await reviewOf(transaction, run.id);
  const signed = review.steps.filter((step) => step.kind === 'signed-off').at(-1);
  // Every clinician who signed the round the sign-off completed (several when the initiative requires them).
  const roundStart = review.steps.findLastIndex((step) => step.kind === 'submitted');
  const signers = review.steps.slice(roundStart + 1).filter((step) => step.kind === 'co-signed' || step.kind === 'signed-off').map((step) => step.actor.name);
  const settings = await briefSettings(transaction, brief.initiativeId);
  const result = run.result as Result;
  const briefFacts: BriefFacts = {
    analysisTitle: facts.analysis_title, question: facts.question,
    initiative: { name: facts.initiative_name, organisation: facts.organisation, description: facts.description },
    runId: run.id, extract: { name: facts.extract_name, version: facts.version_number, sha256: run.extractSha256 },
    engineVersion: run.engineVersion ?? result.engineVersion, seed: run.seed, specHash: run.specHash,
    prespecifiedAt: facts.prespecified_at ? iso(facts.prespecified_at) : null, exploratory: run.exploratory, analysesInInitiative: Number(facts.analyses),
    signOff: signed ? { by: signers.length > 1 ? signers.join(' and ') : signed.actor.name, at: signed.at, meaning: signed.meaning ?? signed.note } : null, threshold: settings.cellThreshold,
  };
  const content = buildBriefContent(result, run.spec as Spec, briefFacts, { title: brief.title, summary: brief.summary, plot: brief.plot, ownCautions: brief.ownCautions });
  return { ...content, credibility: credibilityParagraph((await credibilityOf(transaction, run, false)).overall) };
}

/** Changes a draft; 409 once it is published. */
export async function updateDraft(transaction: Transaction, actor: Actor, brief: BriefRecord, body: UpdateBriefBody): Promise<void> {
  if (brief.state !== 'draft') throw conflict('A published brief cannot be edited; publish a correction with a note saying what changed.');
  await applyChanges(transaction, actor, brief, body);
}

async function applyChanges(transaction: Transaction, actor: Actor, brief: BriefRecord, body: UpdateBriefBody): Promise<BriefRecord> {
  const next = {
    title: body.title?.trim() ?? brief.title, summary: body.summary?.trim() ?? brief.summary, plot: body.plot ?? brief.plot,
    ownCautions: (body.ownCautions ?? brief.ownCautions).map((text) => text.trim()).filter((text) => text.length > 0),
  };
  await sequelize.query(
    `UPDATE briefs SET title = :title, summary = :summary, plot = :plot, own_cautions = CAST(:ownCautions AS jsonb), updated_by = :actor, updated_at = now() WHERE id = :id`,
    { replacements: { ...next, ownCautions: JSON.stringify(next.ownCautions), actor: actor.id, id: brief.id }, transaction },
  );
  return { ...brief, ...next };
}

/** Freezes the brief's current content as the next version. */
async function freezeVersion(transaction: Transaction, actor: Actor, brief: BriefRecord, note: string): Promise<{ version: number; sha256: string }> {
  await sequelize.query('SELECT pg_advisory_xact_lock(hashtext(:key))', { replacements: { key: `brief:${brief.id}` }, transaction });
  const [last] = await sequelize.query<{ version: number | null }>('SELECT max(version) AS version FROM brief_versions WHERE brief_id = :id', { replacements: { id: brief.id }, type: QueryTypes.SELECT, transaction });
  const version = (last?.version ?? 0) + 1;
  const content = await composeContent(transaction, brief);
  const settings = await briefSettings(transaction, brief.initiativeId);
  const publishedAt = new Date();
  const status = `version ${version}, published ${utc(publishedAt)}`;
  const html = renderBriefHtml(content, { status });
  const pdf = await renderBriefPdf(content, settings.pageSize, { author: actor.name, status, createdAt: publishedAt });
  const sha256 = createHash('sha256').update(pdf).digest('hex');
  await sequelize.query(
    `INSERT INTO brief_versions (brief_id, initiative_id, version, content, html, pdf, sha256, page_size, change_note, published_by, published_at)
     VALUES (:briefId, :initiativeId, :version, CAST(:content AS jsonb), :html, :pdf, :sha256, :pageSize, :note, :actor, :publishedAt)`,
    {
      replacements: { briefId: brief.id, initiativeId: brief.initiativeId, version, content: JSON.stringify(content), html, pdf, sha256, pageSize: settings.pageSize, note: note.trim(), actor: actor.id, publishedAt },
      transaction,
    },
  );
  return { version, sha256 };
}

/** Publishes a draft as version 1. */
export async function publishBrief(transaction: Transaction, actor: Actor, brief: BriefRecord): Promise<number> {
  if (brief.state !== 'draft') throw conflict(brief.state === 'published' ? 'This brief is already published; a change is a correction with a note.' : 'A retracted brief cannot be published again.');
  const { version, sha256 } = await freezeVersion(transaction, actor, brief, '');
  await sequelize.query(`UPDATE briefs SET state = 'published', updated_by = :actor, updated_at = now() WHERE id = :id`, { replacements: { actor: actor.id, id: brief.id }, transaction });
  await recordAudit(transaction, { action: 'brief.published', actorId: actor.id, subjectType: 'brief', subjectId: brief.id, initiativeId: brief.initiativeId, clientAddress: actor.clientAddress, details: { version, sha256, runId: brief.runId } });
  await notifyBriefPublished(transaction, actor.id, brief);
  return version;
}

/** Publishes a correction: the changes, frozen as the next version with the note. */
export async function correctBrief(transaction: Transaction, actor: Actor, brief: BriefRecord, body: CorrectionBody): Promise<number> {
  if (brief.state !== 'published') throw conflict(brief.state === 'draft' ? 'This brief is still a draft: edit it and publish it.' : 'A retracted brief cannot be corrected.');
  const { note, ...changes } = body;
  const changed = await applyChanges(transaction, actor, brief, changes);
  const { version, sha256 } = await freezeVersion(transaction, actor, changed, note);
  await recordAudit(transaction, { action: 'brief.corrected', actorId: actor.id, subjectType: 'brief', subjectId: brief.id, initiativeId: brief.initiativeId, clientAddress: actor.clientAddress, details: { version, sha256, noteLength: note.trim().length, note: note.trim() } });
  return version;
}

/** Retracts a published brief: the record stays, every version is marked with the reason. */
export async function retractBrief(transaction: Transaction, actor: Actor, brief: BriefRecord, reason: string): Promise<void> {
  if (brief.state !== 'published') throw conflict(brief.state === 'draft' ? 'A draft is not published, so there is nothing to retract.' : 'This brief is already retracted.');
  const at = new Date();
  await sequelize.query(
    `UPDATE briefs SET state = 'retracted', retracted_at = :at, retracted_by = :actor, retraction_reason = :reason, updated_by = :actor, updated_at = now() WHERE id = :id`,
    { replacements: { at, actor: actor.id, reason: reason.trim(), id: brief.id }, transaction },
  );
  const versions = await sequelize.query<{ version: number; content: BriefContent; page_size: PageSize; published_at: Date; publisher: string }>(
    `SELECT v.version, v.content, v.page_size, v.published_at, u.display_name AS publisher FROM brief_versions v JOIN users u ON u.id = v.published_by WHERE v.brief_id = :id ORDER BY v.version`,
    { replacements: { id: brief.id }, type: QueryTypes.SELECT, transaction },
  );
  for (const version of versions) {
    const pdf = await renderBriefPdf(version.content, version.page_size, {
      author: version.publisher, status: `version ${version.version}, published ${utc(version.published_at)}, retracted ${utc(at)}`, createdAt: new Date(version.published_at),
      retraction: { reason: reason.trim(), at: utc(at) },
    });
    await sequelize.query('UPDATE brief_versions SET retracted_pdf = :pdf WHERE brief_id = :id AND version = :version', { replacements: { pdf, id: brief.id, version: version.version }, transaction });
  }
  await recordAudit(transaction, { action: 'brief.retracted', actorId: actor.id, subjectType: 'brief', subjectId: brief.id, initiativeId: brief.initiativeId, clientAddress: actor.clientAddress, details: { versions: versions.length, reasonLength: reason.trim().length, reason: reason.trim() } });
}

export interface StoredVersion { version: number; content: BriefContent; html: string; pdf: Buffer; sha256: string; publishedAt: string }

/** One published version (the latest when no number is given), with the retraction copy of the PDF where there is one. */
export async function storedVersion(transaction: Transaction, briefId: string, version?: number): Promise<StoredVersion | null> {
  const [row] = await sequelize.query<{ version: number; content: BriefContent; html: string; pdf: Buffer; retracted_pdf: Buffer | null; sha256: string; published_at: Date }>(
    `SELECT version, content, html, pdf, retracted_pdf, sha256, published_at FROM brief_versions WHERE brief_id = :briefId
       ${version ? 'AND version = :version' : ''} ORDER BY version DESC LIMIT 1`,
    { replacements: { briefId, version: version ?? null }, type: QueryTypes.SELECT, transaction },
  );
  return row ? { version: row.version, content: row.content, html: row.html, pdf: row.retracted_pdf ?? row.pdf, sha256: row.sha256, publishedAt: iso(row.published_at) } : null;
}

/** Records a download of a version's PDF. */
export async function recordDownload(transaction: Transaction, actor: Actor, brief: BriefRecord, version: number): Promise<void> {
  await recordAudit(transaction, { action: 'brief.downloaded', actorId: actor.id, subjectType: 'brief', subjectId: brief.id, initiativeId: brief.initiativeId, clientAddress: actor.clientAddress, details: { version } });
}

export interface BriefListItem { id: string; title: string; state: BriefState; versions: number; latestAt: string | null; runId: string; analysisTitle: string; updatedAt: string }

/** An initiative's briefs (or one run's), newest first. */
export async function listBriefs(transaction: Transaction, where: { initiativeId: string } | { runId: string }): Promise<BriefListItem[]> {
  const filter = 'initiativeId' in where ? 'b.initiative_id = :id' : 'b.run_id = :id';
  const rows = await sequelize.query<{ id: string; title: string; state: BriefState; versions: string; latest_at: Date | null; run_id: string; analysis_title: string; updated_at: Date }>(
    `SELECT b.id, b.title, b.state, b.run_id, b.updated_at, a.title AS analysis_title,
            (SELECT count(*) FROM brief_versions v WHERE v.brief_id = b.id) AS versions,
            (SELECT max(published_at) FROM brief_versions v WHERE v.brief_id = b.id) AS latest_at
       FROM briefs b JOIN analyses a ON a.id = b.analysis_id WHERE ${filter} ORDER BY b.updated_at DESC`,
    { replacements: { id: 'initiativeId' in where ? where.initiativeId : where.runId }, type: QueryTypes.SELECT, transaction },
  );
  return rows.map((r) => ({ id: r.id, title: r.title, state: r.state, versions: Number(r.versions), latestAt: r.latest_at ? iso(r.latest_at) : null, runId: r.run_id, analysisTitle: r.analysis_title, updatedAt: iso(r.updated_at) }));
}
