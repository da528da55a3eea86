import { reviewOf } from '../../../../../features/review/review.server';
import { getRun } from '../../../../../features/runs/runs.server';
import { authorize } from '../../../../../lib/server/authorize';
import { notFound } from '../../../../../lib/server/errors';
import { endpoint, json, requireUser, uuidParam } from '../../../../../lib/server/http';

/** GET /api/runs/{runId}/review: the run's review state, its steps and its comments. Every member. */
export const GET = endpoint(async ({ locals, params }) => {
  const user = requireUser(locals);
  const runId = uuidParam(params.runId, 'That run');
  return json(
    await locals.db(async (t) => {
      const run = await getRun(t, runId, { withResult: false });
      if (!run) throw notFound('That run');
      authorize(user, 'read', 'Run', { initiativeId: run.initiativeId }, { hide: true });
      return reviewOf(t, runId);
    }),
  );
});
