import { addComment, reviewedRun } from '../../../../features/review/review.server';
import { CommentBody } from '../../../../features/review/review.schema';
import { getRun } from '../../../../features/runs/runs.server';
import { authorize } from '../../../../lib/server/authorize';
import { notFound } from '../../../../lib/server/errors';
import { clientAddress, endpoint, json, parseBody, requireUser, uuidParam } from '../../../../lib/server/http';

/**
 * POST /api/runs/{runId}/comments: a comment on a run, or a reply (`parentId`); analysts
 * and clinicians of the initiative. Answers 201 with `{ id }`.
 */
export const POST = endpoint(async (context) => {
  const user = requireUser(context.locals);
  const runId = uuidParam(context.params.runId, 'That run');
  const { body, parentId } = await parseBody(context.request, CommentBody);
  const id = await context.locals.db(async (t) => {
    const run = await getRun(t, runId, { withResult: false });
    if (!run) throw notFound('That run');
    authorize(user, 'read', 'Run', { initiativeId: run.initiativeId }, { hide: true });
    authorize(user, 'comment', 'Run', { initiativeId: run.initiativeId });
    return addComment(t, { id: user.id, clientAddress: clientAddress(context) }, reviewedRun(run), body, parentId);
  });
  return json({ id }, 201);
});
