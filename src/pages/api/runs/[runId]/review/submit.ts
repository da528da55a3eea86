import { reviewedRun, reviewOf, submitForReview } from '../../../../../features/review/review.server';
import { SubmitBody } from '../../../../../features/review/review.schema';
import { getRun } from '../../../../../features/runs/runs.server';
import { authorize } from '../../../../../lib/server/authorize';
import { notFound } from '../../../../../lib/server/errors';
import { clientAddress, endpoint, json, parseBody, requireUser, uuidParam } from '../../../../../lib/server/http';

/**
 * POST /api/runs/{runId}/review/submit: an analyst submits a finished run for review, the
 * first time or again after it was sent back; answers the review. 409 from any other state.
 */
export const POST = endpoint(async (context) => {
  const user = requireUser(context.locals);
  const runId = uuidParam(context.params.runId, 'That run');
  const { note } = await parseBody(context.request, SubmitBody);
  return json(
    await context.locals.db(async (t) => {
      const run = await getRun(t, runId, { withResult: false });
      if (!run) throw notFound('That run');
      authorize(user, 'read', 'Run', { initiativeId: run.initiativeId }, { hide: true });
      authorize(user, 'submit', 'Run', { initiativeId: run.initiativeId });
      await submitForReview(t, { id: user.id, clientAddress: clientAddress(context) }, reviewedRun(run), note ?? '');
      return reviewOf(t, runId);
    }),
  );
});
