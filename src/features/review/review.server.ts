/**
 * The review of runs (product brief, review step): an analyst submits a finished run, the
 * initiative's clinicians comment on it and sign it off or send it back with a note, and
 * the board shows every analysis by the state of its review. The steps and comments are
 * append-only; the state machine is enforced here and, for who may record what, by the
 * row-level security policies in policies/rls/007_review.sql.
 */
import { Op, QueryTypes, type Transaction } from 'sequelize';
import { Initiative, ReviewStep, Run, RunComment, User } from '../../../db/models';
import { sequelize } from '@/lib/server/db';
import { conflict, notFound } from '@/lib/server/errors';
import { recordAudit } from '../audit/audit.server';
import { notifyComment, notifyReviewStep } from '../notifications/notifications.server';
import { REVIEW_STATES, type BoardView, type ReviewState, type ReviewView } from './review.schema';

export interface Reviewer {
  id: string;
  clientAddress: string;
}

/** The facts about a run that review needs; read under the caller's identity. */
export interface ReviewedRun {
  id: string;
  initiativeId: string;
  status: string;
  startedBy: string;
  verifiesRunId: string | null;
}

const iso = (value: Date) => new Date(value).toISOString();

/** The review facts of a run from its view (getRun). */
export function reviewedRun(run: { id: string; initiativeId: string; status: string; startedBy: { id: string }; verifiesRunId: string | null }): ReviewedRun {
  return { id: run.id, initiativeId: run.initiativeId, status: run.status, startedBy: run.startedBy.id, verifiesRunId: run.verifiesRunId };
}

/** What may happen next from a state. */
const NEXT: Record<ReviewState, readonly ('submitted' | 'signed-off' | 'sent-back')[]> = {
  draft: ['submitted'],
  'sent-back': ['submitted'],
  submitted: ['signed-off', 'sent-back'],
  'signed-off': [],
};

const STATE_WORDS: Record<ReviewState, string> = {
  draft: 'not submitted yet', submitted: 'waiting for a decision', 'sent-back': 'sent back', 'signed-off': 'signed off',
};
const STEP_WORDS = { submitted: 'submitted', 'signed-off': 'signed off', 'sent-back': 'sent back' } as const;

/** A co-signature leaves the state as it was: the state is the latest step of any other kind. */
const stateOfSteps = (steps: readonly { kind: ReviewStep['kind'] }[]): ReviewState => {
  const latest = steps.findLast((step) => step.kind !== 'co-signed');
  return latest && latest.kind !== 'co-signed' ? latest.kind : 'draft';
};

async function stateOf(transaction: Transaction, runId: string): Promise<ReviewState> {
  const latest = await ReviewStep.findOne({ attributes: ['kind'], where: { runId, kind: { [Op.ne]: 'co-signed' } }, order: [['id', 'DESC']], transaction });
  return latest && latest.kind !== 'co-signed' ? latest.kind : 'draft';
}

/** How many distinct clinicians a run of the initiative needs to sign it off (1 unless the initiative asks for more). */
async function requiredSignOffsOf(transaction: Transaction, initiativeId: string): Promise<number> {
  const initiative = await Initiative.findByPk(initiativeId, { attributes: ['id', 'requiredSignOffs'], transaction });
  return initiative?.requiredSignOffs ?? 1;
}

/**
 * The distinct clinicians who signed since the latest submission: none once the round ended
 * with a send-back (or before any submission).
 */
const signersOfRound = (steps: readonly { kind: ReviewStep['kind']; actorId: string }[]): Set<string> => {
  const start = steps.findLastIndex((step) => step.kind === 'submitted');
  const round = start < 0 ? [] : steps.slice(start + 1);
  if (round.some((step) => step.kind === 'sent-back')) return new Set();
  return new Set(round.filter((step) => step.kind === 'co-signed' || step.kind === 'signed-off').map((step) => step.actorId));
};

/** A run's review: its state, every step and every comment, oldest first. */
export async function reviewOf(transaction: Transaction, runId: string): Promise<ReviewView> {
  const steps = await ReviewStep.findAll({
    attributes: ['id', 'kind', 'actorId', 'note', 'meaning', 'resultDigest', 'createdAt'],
    where: { runId },
    include: [{ model: User, as: 'actor', attributes: ['displayName'], required: true }],
    order: [['id', 'ASC']],
    transaction,
  });
  const comments = await RunComment.findAll({
    attributes: ['id', 'parentId', 'authorId', 'body', 'createdAt'],
    where: { runId },
    include: [{ model: User, as: 'author', attributes: ['displayName'], required: true }],
    order: [['createdAt', 'ASC'], ['id', 'ASC']],
    transaction,
  });
  const run = await Run.findByPk(runId, { attributes: ['id', 'initiativeId'], transaction });
  const required = run ? await requiredSignOffsOf(transaction, run.initiativeId) : 1;
  const signers = signersOfRound(steps);
  return {
    runId,
    state: stateOfSteps(steps),
    signOffs: { required, given: signers.size, signedBy: [...signers] },
    steps: steps.map((s) => ({
      kind: s.kind, actor: { id: s.actorId, name: s.actor?.displayName ?? '' }, note: s.note, at: iso(s.createdAt), meaning: s.meaning, resultDigest: s.resultDigest,
    })),
    comments: comments.map((c) => ({
      id: c.id, parentId: c.parentId, author: { id: c.authorId, name: c.author?.displayName ?? '' }, body: c.body, at: iso(c.createdAt),
    })),
  };
}

/** A decision's signature: what it means, and the digest of the run's result it signs (storedResultDigest in the runs area). */
export interface Signature {
  meaning: string;
  resultDigest: string;
}

async function addStep(
  transaction: Transaction, reviewer: Reviewer, run: ReviewedRun, requested: 'submitted' | 'signed-off' | 'sent-back', note: string,
  signature: Signature | null = null,
): Promise<ReviewState> {
  if (run.status !== 'succeeded') throw conflict('Only a run that finished with results can be reviewed.');
  if (run.verifiesRunId) throw conflict('A re-run that verifies another run is not reviewed itself; review the run it verifies.');
  // Serialise steps on one run, so two reviewers cannot both act on the same state (an advisory lock: raw SQL).
  await sequelize.query('SELECT pg_advisory_xact_lock(hashtext(:key))', { replacements: { key: `review:${run.id}` }, transaction });
  const state = await stateOf(transaction, run.id);
  if (!NEXT[state].includes(requested)) throw conflict(`This run is ${STATE_WORDS[state]}, so it cannot be ${STEP_WORDS[requested]} now.`);
  const kind = requested === 'signed-off' ? await signOffKind(transaction, reviewer, run) : requested;
  const signed = signature ? { meaning: signature.meaning.trim(), resultDigest: signature.resultDigest } : { meaning: null, resultDigest: null };
  await ReviewStep.create({ runId: run.id, initiativeId: run.initiativeId, kind, actorId: reviewer.id, note: note.trim(), ...signed }, { transaction });
  await recordAudit(transaction, {
    action: `review.${kind}`, actorId: reviewer.id, subjectType: 'run', subjectId: run.id, initiativeId: run.initiativeId,
    clientAddress: reviewer.clientAddress,
    details: { from: state, to: kind === 'co-signed' ? state : kind, noteLength: note.trim().length, note: note.trim(), ...(signature ? signed : {}) },
  });
  // A co-signature tells no one: the analyst hears of the sign-off that completes the round.
  if (kind !== 'co-signed') await notifyReviewStep(transaction, reviewer.id, run, kind, note);
  return kind === 'co-signed' ? state : kind;
}

/**
 * A sign-off of a submitted run: 'signed-off' when it is the last the initiative requires
 * (counting distinct clinicians since the latest submission), 'co-signed' before that. A
 * clinician signs once per submission.
 */
async function signOffKind(transaction: Transaction, reviewer: Reviewer, run: ReviewedRun): Promise<'co-signed' | 'signed-off'> {
  const steps = await ReviewStep.findAll({ attributes: ['id', 'kind', 'actorId'], where: { runId: run.id }, order: [['id', 'ASC']], transaction });
  const signers = signersOfRound(steps);
  if (signers.has(reviewer.id)) {
    throw conflict('You have already signed this submission off; another clinician must add the remaining sign-offs.');
  }
  const required = await requiredSignOffsOf(transaction, run.initiativeId);
  return signers.size + 1 >= required ? 'signed-off' : 'co-signed';
}

/** An analyst submits a finished run for review (first time, or again after it was sent back). */
export function submitForReview(transaction: Transaction, reviewer: Reviewer, run: ReviewedRun, note = ''): Promise<ReviewState> {
  return addStep(transaction, reviewer, run, 'submitted', note);
}

/**
 * A clinician signs a submitted run off, or sends it back with a note saying why. Either
 * decision is a signature (the caller has re-authenticated the signer): it states its
 * meaning and is bound to the digest of the run's result.
 */
export function decideReview(
  transaction: Transaction, reviewer: Reviewer, run: ReviewedRun, decision: 'sign-off' | 'send-back', note: string, signature: Signature,
): Promise<ReviewState> {
  return addStep(transaction, reviewer, run, decision === 'sign-off' ? 'signed-off' : 'sent-back', note, signature);
}

/** Adds a comment to a run; a reply to a reply joins its thread (threads are one level deep). */
export async function addComment(transaction: Transaction, author: Reviewer, run: ReviewedRun, body: string, parentId?: string): Promise<string> {
  let threadId: string | null = null;
  if (parentId) {
    const parent = await RunComment.findOne({ attributes: ['id', 'parentId'], where: { id: parentId, runId: run.id }, transaction });
    if (!parent) throw notFound('That comment');
    threadId = parent.parentId ?? parent.id;
  }
  const created = await RunComment.create(
    { runId: run.id, initiativeId: run.initiativeId, parentId: threadId, authorId: author.id, body: body.trim() },
    { transaction },
  );
  await recordAudit(transaction, {
    action: 'review.commented', actorId: author.id, subjectType: 'run', subjectId: run.id, initiativeId: run.initiativeId,
    clientAddress: author.clientAddress, details: { commentId: created.id, inReplyTo: threadId, length: body.trim().length, body: body.trim() },
  });
  await notifyComment(transaction, author.id, run, body, parentId);
  return created.id;
}

/**
 * The initiative's board: every analysis under the state of its review. An analysis is
 * placed by its most recently reviewed run; one with no reviewed run is a draft, shown
 * with its latest finished run (or none yet).
 */
export async function boardOf(transaction: Transaction, initiativeId: string): Promise<BoardView> {
  // The latest step and latest run per analysis (DISTINCT ON): a reporting query, raw SQL.
  const rows = await sequelize.query<{
    id: string; title: string; question: string; run_id: string | null; kind: ReviewState | null; actor_id: string | null;
    actor_name: string | null; note: string | null; meaning: string | null; step_at: Date | null; status: string | null; started_by: string | null;
    starter: string | null; queued_at: Date | null;
  }>(
    `WITH latest_step AS (
       SELECT DISTINCT ON (s.run_id) s.run_id, s.id, s.kind, s.actor_id, s.note, s.meaning, s.created_at
         FROM review_steps s WHERE s.initiative_id = :initiativeId AND s.kind <> 'co-signed' ORDER BY s.run_id, s.id DESC
     ), reviewed AS (
       SELECT DISTINCT ON (r.analysis_id) r.analysis_id, r.id AS run_id, ls.kind, ls.actor_id, ls.note, ls.meaning, ls.created_at
         FROM runs r JOIN latest_step ls ON ls.run_id = r.id ORDER BY r.analysis_id, ls.id DESC
     ), latest_run AS (
       SELECT DISTINCT ON (r.analysis_id) r.analysis_id, r.id AS run_id
         FROM runs r WHERE r.initiative_id = :initiativeId AND r.verifies_run_id IS NULL AND r.status = 'succeeded'
        ORDER BY r.analysis_id, r.queued_at DESC
     )
     SELECT a.id, a.title, a.question, coalesce(rv.run_id, lr.run_id) AS run_id, rv.kind, rv.actor_id, au.display_name AS actor_name,
            rv.note, rv.meaning, rv.created_at AS step_at, r.status, r.started_by, su.display_name AS starter, r.queued_at
       FROM analyses a
       LEFT JOIN reviewed rv ON rv.analysis_id = a.id
       LEFT JOIN latest_run lr ON lr.analysis_id = a.id
       LEFT JOIN runs r ON r.id = coalesce(rv.run_id, lr.run_id)
       LEFT JOIN users su ON su.id = r.started_by
       LEFT JOIN users au ON au.id = rv.actor_id
      WHERE a.initiative_id = :initiativeId
      ORDER BY coalesce(rv.created_at, r.queued_at, a.updated_at) DESC`,
    { replacements: { initiativeId }, type: QueryTypes.SELECT, transaction },
  );
  const columns = REVIEW_STATES.map((state) => ({ state, analyses: [] as BoardView['columns'][number]['analyses'] }));
  for (const row of rows) {
    const state = row.kind ?? 'draft';
    columns.find((column) => column.state === state)!.analyses.push({
      analysisId: row.id, title: row.title, question: row.question,
      run: row.run_id && row.started_by ? { id: row.run_id, status: row.status ?? '', startedBy: { id: row.started_by, name: row.starter ?? '' }, queuedAt: iso(row.queued_at!) } : null,
      lastStep: row.kind && row.actor_id && row.step_at ? { kind: row.kind, actor: { id: row.actor_id, name: row.actor_name ?? '' }, at: iso(row.step_at), note: row.note ?? '', meaning: row.meaning } : null,
    });
  }
  return { columns };
}

/**
 * How many runs wait for a decision in each of the given initiatives (latest step other
 * than a co-signature "submitted"), leaving out runs the reader started, on which they may
 * not decide, and runs whose latest submission they already co-signed.
 */
export async function waitingForReview(transaction: Transaction, initiativeIds: readonly string[], readerId: string): Promise<Map<string, number>> {
  if (initiativeIds.length === 0) return new Map();
  // A count per initiative of runs whose latest step is a submission: a reporting query, raw SQL.
  const rows = await sequelize.query<{ initiative_id: string; waiting: string }>(
    `SELECT r.initiative_id, count(*) AS waiting
       FROM runs r
      WHERE r.initiative_id = ANY($1::uuid[]) AND r.started_by <> $2
        AND (SELECT s.kind FROM review_steps s WHERE s.run_id = r.id AND s.kind <> 'co-signed' ORDER BY s.id DESC LIMIT 1) = 'submitted'
        -- A clinician who already co-signed the latest submission waits for the others.
        AND NOT EXISTS (SELECT 1 FROM review_steps c WHERE c.run_id = r.id AND c.kind = 'co-signed' AND c.actor_id = $2
                          AND c.id > (SELECT max(s.id) FROM review_steps s WHERE s.run_id = r.id AND s.kind = 'submitted'))
      GROUP BY r.initiative_id`,
    { bind: [initiativeIds, readerId], type: QueryTypes.SELECT, transaction },
  );
  return new Map(rows.map((row) => [row.initiative_id, Number(row.waiting)]));
}
