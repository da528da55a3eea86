/**
 * An audit event in words, for the trail page: "changed the model from logistic to
 * modified Poisson", "uploaded extract ward-a.csv as version 2, leaving out columns mrn,
 * dob", "signed off: fine for the ward brief". Notes and comments are quoted in full. The
 * raw details stay available beside the words (the page's expander and the export).
 */
import { PRIVACY_REGIMES, privacyRegimeText, type PrivacyRegime } from '@/lib/privacyRegime';
import type { AuditEventView } from './audit.schema';

type Details = Record<string, unknown>;

const text = (value: unknown): string | null => (typeof value === 'string' && value.trim() !== '' ? value.trim() : null);
const num = (value: unknown): number | null => (typeof value === 'number' && Number.isFinite(value) ? value : null);
const list = (value: unknown): string[] => (Array.isArray(value) ? value.filter((v): v is string => typeof v === 'string') : []);
const plural = (n: number, one: string, many = `${one}s`) => `${n.toLocaleString('en-GB')} ${n === 1 ? one : many}`;
const isObject = (value: unknown): value is Details => typeof value === 'object' && value !== null && !Array.isArray(value);

/** Human names of the specification's fields, by dotted path. */
const SPEC_FIELD: Record<string, string> = {
  model: 'model',
  effectMeasure: 'effect measure',
  'outcome.column': 'outcome',
  'outcome.type': 'outcome type',
  'outcome.event': 'outcome event level',
  'outcome.personTime': 'person-time column',
  'cluster.column': 'cluster column',
  'weights.column': 'frequency-weights column',
  'exposure.column': 'intervention',
  'exposure.reference': 'intervention reference level',
  'exposure.type': 'kind of intervention (binary or a continuous dose)',
  'modifier.column': 'modifier',
  'modifier.type': 'modifier type',
  'modifier.reference': 'modifier reference level',
  'modifier.centre': 'modifier centring',
  'modifier.slopesAt': 'points the effect is marked at',
  modifiers: 'modifiers of the subgroup screen',
  covariates: 'covariates',
  'ci.level': 'confidence level',
  'ci.method': 'interval method',
  'ci.replicates': 'bootstrap replicates',
  'ci.seed': 'bootstrap seed',
  alpha: 'test level',
  multiplicity: 'multiplicity adjustment',
  preventive: 'preventive recoding',
  standardErrors: 'standard errors',
  standardize: 'absolute effects (standardized risks, risk difference and NNT)',
  'planning.interaction': 'planned interaction size',
  'planning.power': 'planned power',
  extractVersionId: 'extract version',
  prespecified: 'pre-specified flag',
};

/** Human names of the specification's coded values. */
const VALUE_WORDS: Record<string, string> = {
  logistic: 'logistic',
  'log-binomial': 'log-binomial',
  'modified-poisson': 'modified Poisson',
  linear: 'linear',
  poisson: 'Poisson (counts and rates)',
  count: 'count',
  robust: 'robust (HC0)',
  OR: 'odds ratio',
  RR: 'risk ratio',
  RD: 'risk difference',
  MD: 'mean difference',
  delta: 'delta method',
  mover: 'MOVER',
  bootstrap: 'percentile bootstrap',
  holm: 'Holm',
  bh: 'Benjamini-Hochberg',
  hc3: 'HC3',
};

function specValue(value: unknown): string {
  if (value === undefined || value === null || value === '') return 'none';
  if (typeof value === 'string') return VALUE_WORDS[value] ?? value;
  if (typeof value === 'boolean') return value ? 'yes' : 'no';
  if (typeof value === 'number') return String(value);
  if (Array.isArray(value)) {
    if (value.length === 0) return 'none';
    return value.map((v) => (isObject(v) && typeof v.column === 'string' ? v.column : specValue(v))).join(', ');
  }
  return JSON.stringify(value);
}

/** Leaves of an object by dotted path; arrays (covariates, slope points) count as one leaf. */
function leaves(value: unknown, prefix = ''): Map<string, unknown> {
  const out = new Map<string, unknown>();
  if (!isObject(value)) {
    if (prefix) out.set(prefix, value);
    return out;
  }
  for (const [key, inner] of Object.entries(value)) {
    const path = prefix ? `${prefix}.${key}` : key;
    for (const [leaf, leafValue] of leaves(inner, path)) out.set(leaf, leafValue);
  }
  return out;
}

/** What changed between two specifications (or analysis settings), one phrase per field. */
export function specChanges(before: unknown, after: unknown): string[] {
  const old = leaves(before);
  const now = leaves(after);
  const paths = [...new Set([...old.keys(), ...now.keys()])];
  const changes: string[] = [];
  for (const path of paths) {
    const a = old.get(path);
    const b = now.get(path);
    if (JSON.stringify(a ?? null) === JSON.stringify(b ?? null)) continue;
    const local = path.replace(/^spec\./, '');
    const score = /^modifier\.ordered\.scores\.(.+)$/.exec(local);
    const name = score ? `trend score of modifier level ${score[1]}` : (SPEC_FIELD[local] ?? local);
    changes.push(`the ${name} from ${specValue(a)} to ${specValue(b)}`);
  }
  return changes;
}

const isRegime = (value: unknown): value is PrivacyRegime => PRIVACY_REGIMES.some((regime) => regime === value);
/** `, under the UK anonymisation (…) rules` when the event names the privacy regime that applied. */
const regimeWords = (d: Details): string => (isRegime(d.privacyRegime) ? `, under the ${privacyRegimeText(d.privacyRegime).name} rules` : '');

const quoted = (note: string | null) => (note ? `: “${note}”` : '');

const REVIEW: Record<string, string> = {
  'review.submitted': 'submitted the run for review',
  'review.co-signed': 'signed off, short of the sign-offs the initiative requires',
  'review.signed-off': 'signed off',
  'review.sent-back': 'sent the run back',
};

const SIGN_IN_FAILED: Record<string, string> = {
  throttled: 'too many attempts, so sign-in was paused',
  'unknown-account': 'no account has that e-mail address',
  'wrong-password': 'wrong password',
};

type Phrase = (d: Details) => string | null;

const PHRASES: Record<string, Phrase> = {
  'analysis.created': (d) => `created the analysis${text(d.title) ? ` “${text(d.title)}”` : ''}${d.prespecified === true ? ', marked pre-specified' : ''}`,
  'analysis.changed': (d) => {
    const before = isObject(d.before) ? d.before : {};
    const after = isObject(d.after) ? d.after : {};
    const changes = specChanges(before, after);
    return changes.length === 0 ? 'saved the analysis unchanged' : `changed ${changes.join('; ')}`;
  },
  'extract.uploaded': (d) => uploadWords('uploaded extract', d),
  'extract.version-added': (d) => uploadWords('added to extract', d),
  'extract.upload-refused': (d) => {
    const reasons = Array.isArray(d.reasons) ? d.reasons.flatMap((r) => (isObject(r) && text(r.message) ? [text(r.message)!] : [])) : [];
    return `the upload${text(d.name) ? ` of ${text(d.name)}` : ''} was refused${regimeWords(d)}${reasons.length ? `: ${reasons.join(' ')}` : ''}`;
  },
  'extract.upload-cancelled': () => 'cancelled an upload',
  'extract.confirmed': (d) => {
    const missing = isObject(d.missingValues) ? Object.keys(d.missingValues) : [];
    const ordered = isObject(d.ordered) ? Object.keys(d.ordered) : [];
    return `confirmed version ${num(d.version) ?? '?'} of the extract${text(d.signedName) ? `, attested by ${text(d.signedName)}` : ''}${d.corrected === true ? ', with corrected column types' : ''}${missing.length ? `; missing-value codes for ${missing.join(', ')}` : ''}${ordered.length ? `; ordered with scores: ${ordered.join(', ')}` : ''}${regimeWords(d)}`;
  },
  'extract.archived': () => 'archived the extract',
  'extract.restored': () => 'restored the extract',
  'extract.rows-viewed': (d) => `viewed ${plural(num(d.rowsShown) ?? 0, 'row')} of version ${num(d.version) ?? '?'}`,
  'extract.file-downloaded': (d) => `downloaded the original file of version ${num(d.version) ?? '?'}`,
  'run.started': () => 'started a run',
  'run.verification-started': () => 'started a re-run to verify the results',
  'run.finished': (d) => `the run finished${num(d.seed) !== null ? ` (seed ${num(d.seed)})` : ''}`,
  'run.failed': (d) => `the run failed${text(d.error) ? `: ${text(d.error)}` : ''}`,
  'run.cancelled': () => 'the run was cancelled',
  'run.cancel-requested': () => 'asked to cancel the run',
  'run.verified': (d) => text(d.summary) ?? (d.reproduced === true ? 'a re-run reproduced the results' : 'a re-run did not reproduce the results'),
  'run.downloaded': (d) => `downloaded the results${text(d.format) ? ` as ${text(d.format)!.toUpperCase()}` : ''}`,
  'review.commented': (d) => `${d.inReplyTo ? 'replied to a comment' : 'commented'}${quoted(text(d.body))}`,
  'plan.saved': (d) => `saved the initiative's plan (${num(d.plannedRows) ?? '?'} rows planned; ${num(d.rowsFor80) ?? '?'} needed for 80 % power)`,
  'prespecification.registered': (d) => `registered “${text(d.modifierColumn) ?? '?'}” as a prespecified modifier${text(d.direction) && d.direction !== 'none' ? `, predicting a ${text(d.direction)} effect${text(d.where) ? ` in ${text(d.where)}` : ''}` : ', with no direction predicted'}`,
  'prespecification.withdrawn': (d) => `withdrew the register entry for “${text(d.modifierColumn) ?? '?'}”${quoted(text(d.reason))}`,
  'credibility.rated': (d) => {
    const after = d.after && typeof d.after === 'object' ? (d.after as Record<string, unknown>) : {};
    const before = d.before && typeof d.before === 'object' ? (d.before as Record<string, unknown>) : null;
    const now = `rationale ${text(after.rationale) ?? '?'}, prior evidence ${text(after.priorEvidence) ?? '?'}`;
    return before ? `changed the credibility ratings from rationale ${text(before.rationale) ?? '?'}, prior evidence ${text(before.priorEvidence) ?? '?'} to ${now}` : `rated the credibility of the subgroup claim: ${now}`;
  },
  'brief.drafted': () => 'drafted a brief',
  'brief.published': (d) => `published version ${num(d.version) ?? '?'} of the brief`,
  'brief.corrected': (d) => `corrected the brief (version ${num(d.version) ?? '?'})${quoted(text(d.note))}`,
  'brief.retracted': (d) => `retracted the brief${quoted(text(d.reason))}`,
  'brief.downloaded': (d) => `downloaded version ${num(d.version) ?? '?'} of the brief`,
  'brief.distributed': (d) => (num(d.recipients) !== null ? `sent the brief to ${plural(num(d.recipients)!, 'person', 'people')}` : `sent the brief to one address (${text(d.status) ?? 'queued'})`),
  'membership.added': (d) => `added them as ${text(d.to) ?? text(d.role) ?? 'a member'}`,
  'membership.role-changed': (d) => `changed their role from ${text(d.from) ?? '?'} to ${text(d.to) ?? '?'}`,
  'membership.removed': (d) => `removed them${text(d.from) ? ` (they were ${text(d.from)})` : ''}`,
  'auth.sign-in': () => 'signed in',
  'auth.sign-out': () => 'signed out',
  'auth.sign-in-failed': (d) => `a sign-in failed${text(d.reason) ? `: ${SIGN_IN_FAILED[text(d.reason)!] ?? text(d.reason)}` : ''}`,
  'auth.invitation-sent': (d) => (d.resent === true ? 'sent a new invitation link' : 'sent an invitation'),
  'auth.invitation-resent': () => 'sent a new invitation link; the old link no longer works',
  'auth.invitation-revoked': () => 'revoked the invitation; its link no longer works',
  'auth.invitation-accepted': () => 'accepted the invitation',
  'auth.password-reset-requested': () => 'asked for a password reset',
  'auth.password-reset': () => 'reset their password',
  'token.created': (d) => `created the API token${text(d.name) ? ` “${text(d.name)}”` : ''}`,
  'token.revoked': () => 'revoked an API token',
  'token.used': (d) => `used an API token${text(d.method) ? ` for ${text(d.method)} ${text(d.path) ?? ''}`.trimEnd() : ''}`,
  'audit.verified': (d) => `checked the trail: ${d.intact === true ? `intact, ${plural(num(d.checked) ?? 0, 'event')}` : 'broken'}`,
  'audit.exported': (d) => `exported ${plural(num(d.count) ?? 0, 'event')}${text(d.format) ? ` as ${text(d.format)!.toUpperCase()}` : ''}`,
  'audit.checkpoint-exported': (d) => `saved a checkpoint at position ${num(d.position) ?? '?'}`,
};

function uploadWords(lead: string, d: Details): string {
  const dropped = list(d.droppedColumns);
  const kept = list(d.keptColumns);
  const parts = [`${lead}${text(d.name) ? ` ${text(d.name)}` : ''} as version ${num(d.version) ?? '?'}`];
  if (num(d.rows) !== null) parts.push(`${plural(num(d.rows)!, 'row')}, ${plural(num(d.columns) ?? 0, 'column')}`);
  if (dropped.length) parts.push(`leaving out ${dropped.length === 1 ? 'column' : 'columns'} ${dropped.join(', ')}`);
  if (kept.length) parts.push(`keeping flagged ${kept.length === 1 ? 'column' : 'columns'} ${kept.join(', ')}${text(d.keepReason) ? ` because “${text(d.keepReason)}”` : ''}`);
  return `${parts.join(', ')}${regimeWords(d)}`;
}

/** The event in words; null when there is nothing to say beyond the action's name. */
export function eventWords(event: Pick<AuditEventView, 'action' | 'details'>): string | null {
  const details = event.details;
  const review = REVIEW[event.action];
  if (review) return `${review}${quoted(text(details.note))}`;
  const phrase = PHRASES[event.action];
  return phrase ? phrase(details) : null;
}
