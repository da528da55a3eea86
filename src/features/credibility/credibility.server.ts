/**
 * A run's credibility assessment (issue 16 §1). The items Crossgrain knows from its own
 * records are worked out here on each request and never stored or edited: prespecification
 * (the register, or the analysis's own earlier declaration), the predicted direction and
 * whether the result agrees, the within-study comparison, the modifiers examined for the
 * outcome, the interaction test with its adjustment, how a numeric modifier was analysed,
 * and related outcomes. A clinician rates the rest (table credibility_ratings, policies in
 * policies/rls/017_credibility.sql); every change is audited as `credibility.rated`.
 */
import { QueryTypes, type Transaction } from 'sequelize';
import type { Result, Spec } from '@/engine/boundary/schemas';
import { isScreenSpec } from '@/features/analyses/screenSpecs';
import { recordAudit } from '@/features/audit/audit.server';
import { runPlanStanding } from '@/features/planning/planning.server';
import { getRun, type RunView } from '@/features/runs/runs.server';
import { sequelize } from '@/lib/server/db';
import { initiativeStamp, StampedCache } from '@/lib/server/initiativeStamp';
import { conflict } from '@/lib/server/errors';
import type { CredibilityBody, CredibilityView } from './credibility.schema';
import { credibilityItems, CREDIBILITY_RULE_TEXT } from './credibilityWords';
import { bonferroni, looksBanded, modificationPattern, observedDirection, overallRating, type PriorRating, type RationaleRating } from './credibilityRule';

export interface Actor {
  id: string;
  clientAddress: string;
}

const iso = (value: Date | string) => new Date(value).toISOString();

interface RatingRow {
  rationale: RationaleRating; rationale_note: string; prior_evidence: PriorRating; prior_evidence_note: string; rated_by: string; rater: string; rated_at: Date;
}

async function ratingOf(transaction: Transaction, runId: string, lock = false): Promise<CredibilityView['clinician']> {
  const [row] = await sequelize.query<RatingRow>(
    `SELECT c.rationale, c.rationale_note, c.prior_evidence, c.prior_evidence_note, c.rated_by, u.display_name AS rater, c.rated_at
       FROM credibility_ratings c JOIN users u ON u.id = c.rated_by WHERE c.run_id = :runId${lock ? ' FOR UPDATE OF c' : ''}`,
    { replacements: { runId }, type: QueryTypes.SELECT, transaction },
  );
  if (!row) return null;
  return {
    rationale: row.rationale, rationaleNote: row.rationale_note, priorEvidence: row.prior_evidence, priorEvidenceNote: row.prior_evidence_note,
    ratedBy: { id: row.rated_by, name: row.rater }, ratedAt: iso(row.rated_at),
  };
}

/** The run's succeeded sibling runs of the initiative (not verification re-runs), newest first per analysis. */
async function latestRunsOfInitiative(transaction: Transaction, initiativeId: string): Promise<{ id: string; analysis_id: string; spec: Spec; result: Result }[]> {
  return sequelize.query(
    `SELECT DISTINCT ON (r.analysis_id) r.id, r.analysis_id, r.spec, r.result
       FROM runs r WHERE r.initiative_id = :initiativeId AND r.status = 'succeeded' AND r.verifies_run_id IS NULL
      ORDER BY r.analysis_id, r.finished_at DESC NULLS LAST, r.id`,
    { replacements: { initiativeId }, type: QueryTypes.SELECT, transaction },
  );
}

/** Distinct modifier columns over the initiative's succeeded runs with this outcome column. */
async function modifiersForOutcome(transaction: Transaction, initiativeId: string, outcome: string): Promise<string[]> {
  const rows = await sequelize.query<{ modifier: string }>(
    `SELECT DISTINCT r.spec #>> '{modifier,column}' AS modifier FROM runs r
      WHERE r.initiative_id = :initiativeId AND r.status = 'succeeded' AND r.verifies_run_id IS NULL AND r.spec #>> '{outcome,column}' = :outcome
      ORDER BY 1`,
    { replacements: { initiativeId, outcome }, type: QueryTypes.SELECT, transaction },
  );
  return rows.map((row) => row.modifier).filter((name) => name !== null);
}

/**
 * Assessments worked out for results pages and the board, under their initiative's
 * counter, which every input of an assessment moves (the run and its siblings, the
 * analysis's declaration, the register and plans, the clinician's ratings, people's names;
 * migration add-initiative-stamps). What the viewer may do (`canRate`) is added on each
 * request.
 */
const assessments = new StampedCache<Omit<CredibilityView, 'canRate'>>();

/** Whether a run has a credibility assessment: a finished run of one modifier, not a subgroup screen or a verifying re-run. */
export function isAssessable(run: RunView): boolean {
  return run.status === 'succeeded' && !run.verifiesRunId && !isScreenSpec(run.spec);
}

/**
 * The computed items and the overall rating of a succeeded run (`canRate` is the caller's
 * right). `stamp` is the initiative's counter when the caller has read it already
 * in this transaction.
 */
export async function credibilityOf(transaction: Transaction, run: RunView, canRate: boolean, stamp?: string): Promise<CredibilityView> {
  if (run.status !== 'succeeded' || run.verifiesRunId) throw conflict('Credibility is assessed on a finished run of an analysis, not on a run still under way, failed, or a verifying re-run.');
  if (isScreenSpec(run.spec)) throw conflict('Credibility is assessed on a run of one modifier; a subgroup screen shows each modifier\'s standing instead, and a full analysis of one of them is assessed on its own results page.');
  const counter = stamp ?? await initiativeStamp(transaction, run.initiativeId);
  const assessment = await assessments.through(run.id, counter, () => workOutCredibility(transaction, run, counter));
  return { ...assessment, canRate };
}

async function workOutCredibility(transaction: Transaction, run: RunView, stamp: string): Promise<Omit<CredibilityView, 'canRate'>> {
  const full = run.result ? run : await getRun(transaction, run.id, { withResult: true });
  const result = full?.result;
  if (!full || !result) throw conflict('This run has no result to assess.');
  const spec = full.spec;

  const [facts] = await sequelize.query<{ prespecified_at: Date | null; uploaded_at: Date; dictionary: { name: string; type: string }[] | null }>(
    `SELECT a.prespecified_at, v.uploaded_at, v.dictionary FROM analyses a JOIN extract_versions v ON v.id = :versionId WHERE a.id = :analysisId`,
    { replacements: { analysisId: full.analysisId, versionId: full.extractVersionId }, type: QueryTypes.SELECT, transaction },
  );
  const standing = await runPlanStanding(transaction, full.id, stamp);
  const declared = facts?.prespecified_at && new Date(facts.uploaded_at) <= new Date(facts.prespecified_at) ? iso(facts.prespecified_at) : null;
  const prespecified: CredibilityView['computed']['prespecified'] = standing?.status === 'planned' && standing.entry
    ? { value: true, at: standing.entry.registeredAt, source: 'register' }
    : declared ? { value: true, at: declared, source: 'declaration' } : { value: false, at: null, source: null };

  const entry = standing?.entry ?? null;
  const predicted = entry && entry.direction !== 'none' ? entry.direction : null;
  const observed = predicted && entry ? observedDirection(result, predicted, entry.where) : null;

  const columns = await modifiersForOutcome(transaction, full.initiativeId, spec.outcome.column);
  const count = Math.max(1, columns.length);
  const omnibus = result.interaction.omnibus;
  const adjustedP = bonferroni(omnibus.p, count);

  const dictionaryType = facts?.dictionary?.find((column) => column.name === spec.modifier.column)?.type ?? null;
  const continuousModifier: CredibilityView['computed']['continuousModifier'] = spec.modifier.type === 'continuous'
    ? 'continuous'
    : dictionaryType === 'continuous' || dictionaryType === 'count' || looksBanded(result.modifier.levels ?? result.strata.map((s) => s.level))
      ? 'number-in-categories' : 'not-applicable';

  // Related outcomes: the latest run of each other analysis with the same modifier and
  // intervention but another outcome; consistent when the effect is stronger (or weaker) in
  // the same levels as here.
  const here = modificationPattern(result);
  const relatedOutcomes = (await latestRunsOfInitiative(transaction, full.initiativeId))
    .filter((other) => other.analysis_id !== full.analysisId && other.spec.modifier?.column === spec.modifier.column
      && other.spec.exposure?.column === spec.exposure.column && other.spec.outcome?.column !== spec.outcome.column)
    .map((other) => {
      const there = modificationPattern(other.result);
      const shared = [...here].filter(([level, sign]) => sign !== 0 && (there.get(level) ?? 0) !== 0);
      return { outcome: other.spec.outcome.column, runId: other.id, consistent: shared.every(([level, sign]) => there.get(level) === sign) };
    });

  const computed: CredibilityView['computed'] = {
    prespecified,
    direction: { predicted, where: entry?.where ?? '', agrees: observed?.agrees ?? null },
    withinStudy: true,
    modifiersExamined: { count, columns },
    interactionTest: {
      test: omnibus.test, p: omnibus.p, adjustedP, alpha: result.alpha,
      holdsUnadjusted: omnibus.p !== null && omnibus.p < result.alpha, holdsAdjusted: adjustedP !== null && adjustedP < result.alpha,
    },
    continuousModifier,
    relatedOutcomes,
  };
  const clinician = await ratingOf(transaction, full.id);
  const overall = overallRating({
    prespecified: prespecified.value, directionPredicted: predicted !== null, directionAgrees: computed.direction.agrees,
    alpha: result.alpha, p: omnibus.p, pAdjusted: adjustedP, numberInCategories: continuousModifier === 'number-in-categories',
    relatedConsistent: relatedOutcomes.length === 0 ? null : relatedOutcomes.every((related) => related.consistent),
    rationale: clinician?.rationale ?? null, priorEvidence: clinician?.priorEvidence ?? null,
  });
  return {
    runId: full.id, computed, clinician,
    items: credibilityItems(result, computed, clinician, observed?.text ?? null),
    overall, rule: CREDIBILITY_RULE_TEXT,
  };
}

/** Records the clinician's ratings (insert or change), audited with the values before and after. */
export async function rateCredibility(transaction: Transaction, actor: Actor, run: RunView, body: CredibilityBody): Promise<void> {
  if (run.status !== 'succeeded' || run.verifiesRunId) throw conflict('Credibility is rated on a finished run of an analysis.');
  const before = await ratingOf(transaction, run.id, true);
  const values = { runId: run.id, initiativeId: run.initiativeId, actor: actor.id, ...body };
  if (before) {
    await sequelize.query(
      `UPDATE credibility_ratings SET rationale = :rationale, rationale_note = :rationaleNote, prior_evidence = :priorEvidence,
              prior_evidence_note = :priorEvidenceNote, rated_by = :actor, rated_at = clock_timestamp() WHERE run_id = :runId`,
      { replacements: values, transaction },
    );
  } else {
    await sequelize.query(
      `INSERT INTO credibility_ratings (run_id, initiative_id, rationale, rationale_note, prior_evidence, prior_evidence_note, rated_by)
       VALUES (:runId, :initiativeId, :rationale, :rationaleNote, :priorEvidence, :priorEvidenceNote, :actor)`,
      { replacements: values, transaction },
    );
  }
  const shape = (rating: { rationale: string; rationaleNote: string; priorEvidence: string; priorEvidenceNote: string }) => ({
    rationale: rating.rationale, rationaleNote: rating.rationaleNote, priorEvidence: rating.priorEvidence, priorEvidenceNote: rating.priorEvidenceNote,
  });
  await recordAudit(transaction, {
    action: 'credibility.rated', actorId: actor.id, subjectType: 'run', subjectId: run.id, initiativeId: run.initiativeId, clientAddress: actor.clientAddress,
    details: { before: before ? shape(before) : null, after: shape(body) },
  });
}

/** The overall rating of several runs at once, for the review board's badges (runs that cannot be assessed, such as subgroup screens, are left out). */
export async function credibilityBadges(transaction: Transaction, initiativeId: string, runIds: readonly string[]): Promise<Map<string, CredibilityView['overall']>> {
  const out = new Map<string, CredibilityView['overall']>();
  if (runIds.length === 0) return out;
  // One counter for the board's initiative; a run is read only when its assessment is not kept under it.
  const stamp = await initiativeStamp(transaction, initiativeId);
  for (const runId of runIds) {
    const kept = assessments.get(runId, stamp);
    if (kept) {
      out.set(runId, kept.overall);
      continue;
    }
    const run = await getRun(transaction, runId, { withResult: true });
    if (!run || run.initiativeId !== initiativeId || !run.result || !isAssessable(run)) continue;
    out.set(run.id, (await credibilityOf(transaction, run, false, stamp)).overall);
  }
  return out;
}
