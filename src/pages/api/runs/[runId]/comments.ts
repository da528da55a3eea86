import { addComment, reviewedRun } from '@/features/review/review.server';
import { CommentBody } from '@/features/review/review.schema';
import { readableRun } from '@/features/runs/runAccess';
import { authorize } from '@/lib/server/authorize';
import { clientAddress, endpoint, json, parseBody, requireUser, uuidParam } from '@/lib/server/http';

/**
 * POST /api/runs/{runId}/comments: a comment on a run, or a reply (`parentId`); analysts
 * and clinicians of the initiative. Answers 201 with `{ id }`.
 */
export const POST = endpoint(async (context) => {
  const user = requireUser(context.locals);
  const runId = uuidParam(context.params.runId, 'That run');
  const { body, parentId } = await parseBody(context.request, CommentBody);
  const id = await context.locals.db(async (t) => {
    const run = await readableRun(t, user, runId);
    authorize(user, 'comment', 'Run', { initiativeId: run.initiativeId });
    return addComment(t, { id: user.id, clientAddress: clientAddress(context) }, reviewedRun(run), body, parentId);
  });
  return json({ id }, 201);
});
