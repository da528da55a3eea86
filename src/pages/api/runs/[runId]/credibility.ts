import { credibilityOf, rateCredibility } from '@/features/credibility/credibility.server';
import { CredibilityBody } from '@/features/credibility/credibility.schema';
import { readableRun } from '@/features/runs/runAccess';
import { authorize, can } from '@/lib/server/authorize';
import { clientAddress, endpoint, json, parseBody, requireUser, uuidParam } from '@/lib/server/http';

const decideFields = (run: { initiativeId: string; startedBy: { id: string } }) => ({ initiativeId: run.initiativeId, startedBy: run.startedBy.id });

/**
 * GET /api/runs/{runId}/credibility: the run's credibility assessment, the items Crossgrain
 * computes, the clinician's ratings and the overall rating with its reasons. Every member;
 * 409 for a run without a result or a verifying re-run.
 */
export const GET = endpoint(async ({ locals, params }) => {
  const user = requireUser(locals);
  const runId = uuidParam(params.runId, 'That run');
  return json(
    await locals.db(async (t) => {
      const run = await readableRun(t, user, runId, { withResult: true });
      return credibilityOf(t, run, can(user, 'decide', 'Run', decideFields(run)));
    }),
  );
});

/**
 * PUT /api/runs/{runId}/credibility: the clinician's ratings of the clinical rationale and
 * the prior evidence, each with a note (clinicians who may decide on the run). Audited as
 * `credibility.rated` with the values before and after. Answers the whole assessment.
 */
export const PUT = endpoint(async (context) => {
  const user = requireUser(context.locals);
  const runId = uuidParam(context.params.runId, 'That run');
  return json(
    await context.locals.db(async (t) => {
      // Who may rate comes first: a non-member gets 404 and a wrong role 403 whatever they send.
      const run = await readableRun(t, user, runId, { withResult: true });
      authorize(user, 'decide', 'Run', decideFields(run));
      const body = await parseBody(context.request, CredibilityBody);
      await rateCredibility(t, { id: user.id, clientAddress: clientAddress(context) }, run, body);
      return credibilityOf(t, run, true);
    }),
  );
});
