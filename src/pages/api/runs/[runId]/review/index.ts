import { reviewOf } from '@/features/review/review.server';
import { readableRun } from '@/features/runs/runAccess';
import { endpoint, json, requireUser, uuidParam } from '@/lib/server/http';

/** GET /api/runs/{runId}/review: the run's review state, its steps and its comments. Every member. */
export const GET = endpoint(async ({ locals, params }) => {
  const user = requireUser(locals);
  const runId = uuidParam(params.runId, 'That run');
  return json(
    await locals.db(async (t) => {
      await readableRun(t, user, runId);
      return reviewOf(t, runId);
    }),
  );
});
