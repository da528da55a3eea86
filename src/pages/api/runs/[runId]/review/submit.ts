import { reviewedRun, reviewOf, submitForReview } from '@/features/review/review.server';
import { SubmitBody } from '@/features/review/review.schema';
import { readableRun } from '@/features/runs/runAccess';
import { authorize } from '@/lib/server/authorize';
import { clientAddress, endpoint, json, parseBody, requireUser, uuidParam } from '@/lib/server/http';

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
      const run = await readableRun(t, user, runId);
      authorize(user, 'submit', 'Run', { initiativeId: run.initiativeId });
      await submitForReview(t, { id: user.id, clientAddress: clientAddress(context) }, reviewedRun(run), note ?? '');
      return reviewOf(t, runId);
    }),
  );
});
