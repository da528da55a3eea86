import { decideReview, reviewedRun, reviewOf } from '../../../../../features/review/review.server';
import { DecisionBody } from '../../../../../features/review/review.schema';
import { readableRun } from '../../../../../features/runs/runAccess';
import { authorize } from '../../../../../lib/server/authorize';
import { clientAddress, endpoint, json, parseBody, requireUser, uuidParam } from '../../../../../lib/server/http';

/**
 * POST /api/runs/{runId}/review/decision: a clinician signs a submitted run off or sends it
 * back (a note saying why is required); never on a run they started. Answers the review.
 */
export const POST = endpoint(async (context) => {
  const user = requireUser(context.locals);
  const runId = uuidParam(context.params.runId, 'That run');
  const { decision, note } = await parseBody(context.request, DecisionBody);
  return json(
    await context.locals.db(async (t) => {
      const run = await readableRun(t, user, runId);
      authorize(user, 'decide', 'Run', { initiativeId: run.initiativeId, startedBy: run.startedBy.id });
      await decideReview(t, { id: user.id, clientAddress: clientAddress(context) }, reviewedRun(run), decision, note);
      return reviewOf(t, runId);
    }),
  );
});
