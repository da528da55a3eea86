/**
 * The credibility of a run's subgroup claim (issue 16 §1) over HTTP: the items Crossgrain
 * computes from its records (register entries, the initiative's other analyses and runs,
 * the run's own result), the clinician's ratings (clinicians only, audited with before and
 * after, bad input storing nothing), the panel on the results page, the badge on the
 * board and the paragraph in the brief. Expected values are derived in the test from the
 * stored results themselves (the runs' own stratum estimates and omnibus p), never typed in.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { QueryTypes } from 'sequelize';
import { generateCallBackCohort } from '@/features/extracts/demoCohorts';
import { sequelize, withIdentity } from '@/lib/server/db';
import { startServer, type ServerHandle } from '../browser/harness';
import { makeReadyExtract } from '../support/extractFactory';
import { closeOwnerDb, makeInitiative, ownerDb } from '../support/factories';
import { ApiClient } from '../support/http';
import { signedInMembers } from '../support/members';
import { finishedRunOverHttp } from '../support/runs';

const password = 'lantern-quay-bramble';
type Role = 'analyst' | 'clinician' | 'auditor' | 'outsider';
let server: ServerHandle;
let initiativeId: string;
let versionId: string;
const clients = {} as Record<Role, ApiClient>;
const ids = {} as Record<Role, string>;
const runs = {} as Record<'sex' | 'age' | 'comorbidity' | 'related', string>;

interface Stratum { level: string; effect: { estimate: number } }
interface StoredResult { alpha: number; strata: Stratum[]; interaction: { omnibus: { p: number } } }

async function runOf(title: string, spec: Record<string, unknown>): Promise<string> {
  return (await finishedRunOverHttp(clients.analyst, ids.analyst, { initiativeId, extractVersionId: versionId, title, question: 'Does the effect differ?', spec })).runId;
}
const base = { exposure: { column: 'call_back', reference: '0' }, covariates: [], ci: { level: 0.95, method: 'delta' } };
const readmission = { outcome: { column: 'readmitted_30d', type: 'binary' }, model: 'logistic' };
const resultOf = async (runId: string) =>
  (await ownerDb().query<{ result: StoredResult }>('SELECT result FROM runs WHERE id = :runId', { replacements: { runId }, type: QueryTypes.SELECT }))[0].result;
const ratingRows = async () => Number((await ownerDb().query<{ n: number }>('SELECT count(*)::int AS n FROM credibility_ratings WHERE initiative_id = :initiativeId', { replacements: { initiativeId }, type: QueryTypes.SELECT }))[0].n);
const path = (runId: string) => `/api/runs/${runId}/credibility`;
/** |effect| on the measure's scale: ln for the odds ratios, the value for mean differences. */
const strength = (stratum: Stratum | undefined, ratio: boolean) => Math.abs(ratio ? Math.log(stratum!.effect.estimate) : stratum!.effect.estimate);

beforeAll(async () => {
  server = await startServer();
  initiativeId = (await makeInitiative('Credibility ward')).id;
  const other = (await makeInitiative('Other credibility ward')).id;
  const signedIn = await signedInMembers(password, [
    ['analyst', initiativeId, 'analyst'], ['clinician', initiativeId, 'clinician'], ['auditor', initiativeId, 'auditor'], ['outsider', other, 'clinician'],
  ] as const);
  Object.assign(ids, signedIn.ids);
  Object.assign(clients, signedIn.clients);
  // The register entry comes before the data: sex, predicted to make the call-back's effect stronger in men.
  expect((await clients.analyst.request('POST', `/api/initiatives/${initiativeId}/prespecified-modifiers`, {
    modifierColumn: 'sex', outcomeColumn: 'readmitted_30d', direction: 'stronger', where: 'M', rationale: 'Men are called back less often at home.',
  })).status).toBe(201);
  versionId = (await makeReadyExtract(ids.analyst, initiativeId, generateCallBackCohort({ rows: 800 }).csv)).versionId;
  runs.sex = await runOf('Call-back by sex', { ...base, ...readmission, modifier: { column: 'sex', type: 'categorical', reference: 'F' } });
  runs.age = await runOf('Call-back by age band', { ...base, ...readmission, modifier: { column: 'age_band', type: 'categorical', reference: '18-44' } });
  runs.comorbidity = await runOf('Call-back by comorbidity', { ...base, ...readmission, modifier: { column: 'comorbidity_score', type: 'continuous' } });
  runs.related = await runOf('Prior admissions by sex', { ...base, outcome: { column: 'prior_admissions', type: 'continuous' }, model: 'linear', modifier: { column: 'sex', type: 'categorical', reference: 'F' } });
}, 180_000);

afterAll(async () => {
  await server?.close();
  await closeOwnerDb();
});

describe('the items Crossgrain fills in', () => {
  it('reads prespecification and the predicted direction from the register, and checks the direction against the result', async () => {
    const response = await clients.auditor.request('GET', path(runs.sex));
    expect(response.status).toBe(200);
    const view = await response.json();
    expect(view.canRate).toBe(false);
    expect(view.computed.prespecified).toMatchObject({ value: true, source: 'register' });
    const result = await resultOf(runs.sex);
    // Stronger in M when |ln OR(M)| > |ln OR(F)|, from the run's own stratum odds ratios.
    const agrees = strength(result.strata.find((s) => s.level === 'M'), true) > strength(result.strata.find((s) => s.level === 'F'), true);
    expect(view.computed.direction).toEqual({ predicted: 'stronger', where: 'M', agrees });
    expect(view.computed.withinStudy).toBe(true);
    expect(view.items.find((item: { key: string }) => item.key === 'within-study').answer).toMatch(/same extract and the same model/);
    expect(view.computed.continuousModifier).toBe('not-applicable');
  });

  it('counts the modifiers examined for the outcome and adjusts the interaction test for them', async () => {
    const view = await (await clients.analyst.request('GET', path(runs.sex))).json();
    // Three modifiers for readmitted_30d; the prior-admissions analysis has another outcome.
    expect(view.computed.modifiersExamined).toEqual({ count: 3, columns: ['age_band', 'comorbidity_score', 'sex'] });
    const result = await resultOf(runs.sex);
    const p = result.interaction.omnibus.p;
    expect(view.computed.interactionTest.p).toBe(p);
    // Bonferroni for one test of three: min(1, 3p) (common practice).
    expect(view.computed.interactionTest.adjustedP).toBeCloseTo(Math.min(1, 3 * p), 14);
    expect(view.computed.interactionTest.holdsAdjusted).toBe(3 * p < result.alpha);
    expect(view.computed.interactionTest.holdsUnadjusted).toBe(p < result.alpha);
  });

  it('flags a banded modifier analysed in categories, and knows a continuous one analysed as such', async () => {
    const age = await (await clients.analyst.request('GET', path(runs.age))).json();
    expect(age.computed.continuousModifier).toBe('number-in-categories');
    expect(age.computed.prespecified).toEqual({ value: false, at: null, source: null });
    expect(age.computed.direction.predicted).toBeNull();
    expect(age.overall.reasons).toContain('A modifier recorded as a number was analysed in categories, so the cut-points may drive the finding.');
    const comorbidity = await (await clients.analyst.request('GET', path(runs.comorbidity))).json();
    expect(comorbidity.computed.continuousModifier).toBe('continuous');
  });

  it('compares the direction of the interaction with related outcomes, and says when there are none', async () => {
    const view = await (await clients.analyst.request('GET', path(runs.sex))).json();
    const here = await resultOf(runs.sex);
    const there = await resultOf(runs.related);
    // Consistent when the effect is stronger in M than in F for both outcomes, or weaker for both.
    const sign = (result: StoredResult, ratio: boolean) => Math.sign(strength(result.strata.find((s) => s.level === 'M'), ratio) - strength(result.strata.find((s) => s.level === 'F'), ratio));
    expect(view.computed.relatedOutcomes).toEqual([{ outcome: 'prior_admissions', runId: runs.related, consistent: sign(here, true) === sign(there, false) }]);
    const age = await (await clients.analyst.request('GET', path(runs.age))).json();
    expect(age.computed.relatedOutcomes).toEqual([]);
    expect(age.items.find((item: { key: string }) => item.key === 'related-outcomes').answer).toMatch(/^No related outcomes analysed/);
  });
});

describe('the clinician\'s ratings', () => {
  it('keeps out non-members (404) and other roles (403); bad input is a 400 that stores nothing', async () => {
    const body = { rationale: 'plausible', priorEvidence: 'none-known' };
    expect((await clients.outsider.request('GET', path(runs.sex))).status).toBe(404);
    expect((await clients.outsider.request('PUT', path(runs.sex), body)).status).toBe(404);
    expect((await clients.analyst.request('PUT', path(runs.sex), body)).status).toBe(403);
    expect((await clients.auditor.request('PUT', path(runs.sex), body)).status).toBe(403);
    const bad = await clients.clinician.request('PUT', path(runs.sex), { rationale: 'certain', priorEvidence: 'supports' });
    expect(bad.status).toBe(400);
    expect(JSON.stringify(await bad.json())).toContain('Rate the clinical or biological rationale');
    expect((await clients.clinician.request('PUT', path(runs.sex), { ...body, rationaleNote: 'x'.repeat(2001) })).status).toBe(400);
    // Below the API, row-level security refuses the same: an analyst or auditor cannot write a rating.
    for (const role of ['analyst', 'auditor'] as const) {
      await expect(withIdentity(ids[role], (t) => sequelize.query(
        `INSERT INTO credibility_ratings (run_id, initiative_id, rationale, prior_evidence, rated_by) VALUES (:runId, :initiativeId, 'strong', 'supports', :actor)`,
        { replacements: { runId: runs.sex, initiativeId, actor: ids[role] }, transaction: t },
      ))).rejects.toThrow(/row-level security/);
    }
    expect(await ratingRows()).toBe(0);
    expect((await clients.clinician.request('GET', path(runs.sex))).status).toBe(200);
  });

  it('records the ratings, steps the overall rating down by the rule, and audits each change with before and after', async () => {
    const first = await clients.clinician.request('PUT', path(runs.sex), { rationale: 'strong', rationaleNote: 'Fits what the ward sees.', priorEvidence: 'supports' });
    expect(first.status).toBe(200);
    const rated = await first.json();
    expect(rated.clinician).toMatchObject({ rationale: 'strong', priorEvidence: 'supports', rationaleNote: 'Fits what the ward sees.', ratedBy: { id: ids.clinician } });
    expect(rated.overall.provisional).toBe(false);
    const second = await (await clients.clinician.request('PUT', path(runs.sex), { rationale: 'none', priorEvidence: 'contradicts', priorEvidenceNote: 'Two audits found the reverse.' })).json();
    // Two more steps down than before (weak or absent rationale; evidence against), floored at very low.
    const order = ['high', 'moderate', 'low', 'very-low'];
    expect(order.indexOf(second.overall.level)).toBe(Math.min(3, order.indexOf(rated.overall.level) + 2));
    expect(second.overall.reasons).toEqual(expect.arrayContaining(['The clinician finds little clinical or biological reason for the difference.', 'Earlier evidence points the other way.']));
    expect(await ratingRows()).toBe(1);
    const events = await ownerDb().query<{ action: string; actor_id: string; details: { before: unknown; after: unknown } }>(
      "SELECT action, actor_id, details FROM audit_events WHERE initiative_id = :initiativeId AND action = 'credibility.rated' ORDER BY id", { replacements: { initiativeId }, type: QueryTypes.SELECT },
    );
    expect(events).toHaveLength(2);
    expect(events[0]).toMatchObject({ actor_id: ids.clinician, details: { before: null, after: { rationale: 'strong', priorEvidence: 'supports' } } });
    expect(events[1].details).toMatchObject({ before: { rationale: 'strong', priorEvidence: 'supports' }, after: { rationale: 'none', priorEvidence: 'contradicts' } });
    // The analyst reads what the clinician set.
    expect((await (await clients.analyst.request('GET', path(runs.sex))).json()).clinician.rationale).toBe('none');
  });
});

describe('where the rating shows', () => {
  it('is on the results page, with the form for the clinician only, and as a badge on the board', async () => {
    const page = await (await clients.clinician.request('GET', `/runs/${runs.sex}`)).text();
    expect(page).toContain('data-testid="credibility-panel"');
    expect(page).toContain('How credible is this subgroup claim?');
    expect(page).toContain('Save the ratings');
    const analystPage = await (await clients.analyst.request('GET', `/runs/${runs.sex}`)).text();
    expect(analystPage).toContain('data-testid="credibility-panel"');
    expect(analystPage).not.toContain('Save the ratings');
    const board = await (await clients.auditor.request('GET', `/initiatives/${initiativeId}/board`)).text();
    expect(board.match(/data-testid="credibility-badge"/g)).toHaveLength(4);
  });

  it('appears in the brief as a paragraph with the rating and its reasons, and no count', async () => {
    expect((await clients.analyst.request('POST', `/api/runs/${runs.sex}/review/submit`, {})).status).toBe(200);
    expect((await clients.clinician.request('POST', `/api/runs/${runs.sex}/review/decision`, { decision: 'sign-off', meaning: 'reviewed, no objection', password })).status).toBe(200);
    const drafted = await clients.analyst.request('POST', `/api/runs/${runs.sex}/briefs`, { title: 'Call-back by sex', summary: 'Whether the call-back helps men more.' });
    expect(drafted.status).toBe(201);
    const briefId = (await drafted.json()).id;
    const view = await (await clients.analyst.request('GET', path(runs.sex))).json();
    const page = await (await clients.analyst.request('GET', `/briefs/${briefId}`)).text();
    expect(page).toContain('How credible is the subgroup claim');
    const paragraph = (page.match(/data-testid="brief-credibility">([^<]*)</)?.[1] ?? '').replace(/&#?\w+;/g, "'");
    expect(paragraph).toContain(view.overall.label);
    expect(paragraph).toContain('earlier evidence points the other way');
    expect(paragraph).not.toMatch(/\d/);
  });
});

describe('kept in memory between views, and never behind the records', () => {
  // The server keeps assessments and standings under the initiative's counter
  // (lib/server/initiativeStamp.ts); every change below is made where the server does not see
  // it happen (this process, or another endpoint), and the next view must show it.
  const panelOf = async (runId: string) => (await (await clients.analyst.request('GET', path(runId))).json());
  const standingOf = async (runId: string) => (await (await clients.analyst.request('GET', `/runs/${runId}`)).text()).match(/data-testid="plan-standing" data-status="([a-z]+)"/)?.[1];

  it('counts a new analysis of the outcome as soon as its run finishes', async () => {
    const before = await panelOf(runs.age);
    expect(await panelOf(runs.age)).toEqual(before);
    const site = await runOf('Call-back by site', { ...base, ...readmission, modifier: { column: 'site', type: 'categorical', reference: 'Tern Valley General' } });
    const after = await panelOf(runs.age);
    expect(after.computed.modifiersExamined.count).toBe(before.computed.modifiersExamined.count + 1);
    expect(after.computed.modifiersExamined.columns).toContain('site');
    const board = await (await clients.auditor.request('GET', `/initiatives/${initiativeId}/board`)).text();
    expect(board.match(/data-testid="credibility-badge"/g)).toHaveLength(5);
    expect(site).toBeTruthy();
  });

  it('shows a withdrawn register entry on the next view of the page and of the panel', async () => {
    expect(await standingOf(runs.sex)).toBe('planned');
    expect((await panelOf(runs.sex)).computed.prespecified.source).toBe('register');
    const register: { id: string; modifierColumn: string }[] = await (await clients.analyst.request('GET', `/api/initiatives/${initiativeId}/prespecified-modifiers`)).json();
    const entry = register.find((e) => e.modifierColumn === 'sex')!;
    const withdrawn = await clients.analyst.request('POST', `/api/initiatives/${initiativeId}/prespecified-modifiers/${entry.id}/withdraw`, { reason: 'Registered in error.' });
    expect(withdrawn.status).toBe(200);
    expect(await standingOf(runs.sex)).toBe('exploratory');
    expect((await panelOf(runs.sex)).computed.prespecified.value).toBe(false);
  });

  it('shows a rating changed outside the server on the next view', async () => {
    const before = await panelOf(runs.age);
    await ownerDb().query(
      `INSERT INTO credibility_ratings (run_id, initiative_id, rationale, prior_evidence, rated_by) VALUES (:runId, :initiativeId, 'none', 'contradicts', :by)
       ON CONFLICT (run_id) DO UPDATE SET rationale = 'none', prior_evidence = 'contradicts'`,
      { replacements: { runId: runs.age, initiativeId, by: ids.clinician } },
    );
    const after = await panelOf(runs.age);
    expect(after.clinician).toMatchObject({ rationale: 'none', priorEvidence: 'contradicts' });
    expect(before.clinician?.rationale ?? null).not.toBe('none');
  });
});
