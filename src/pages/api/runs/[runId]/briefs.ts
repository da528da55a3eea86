import { actorOf } from '@/features/briefs/briefAccess';
import { draftBrief, listBriefs } from '@/features/briefs/briefs.server';
import { NewBriefBody } from '@/features/briefs/briefs.schema';
import { readableRun } from '@/features/runs/runAccess';
import { authorize } from '@/lib/server/authorize';
import { endpoint, json, parseBody, requireUser, uuidParam } from '@/lib/server/http';

/** GET /api/runs/{runId}/briefs: the briefs drafted from a run. Every member. */
export const GET = endpoint(async ({ locals, params }) => {
  const user = requireUser(locals);
  const runId = uuidParam(params.runId, 'That run');
  return json(await locals.db(async (t) => {
    await readableRun(t, user, runId);
    return listBriefs(t, { runId });
  }));
});

/**
 * POST /api/runs/{runId}/briefs: an analyst drafts a brief from a signed-off run (409
 * otherwise, saying so). Answers 201 { id }. Audited as `brief.drafted`.
 */
export const POST = endpoint(async (context) => {
  const user = requireUser(context.locals);
  const runId = uuidParam(context.params.runId, 'That run');
  const body = await parseBody(context.request, NewBriefBody);
  const id = await context.locals.db(async (t) => {
    const run = await readableRun(t, user, runId);
    authorize(user, 'create', 'Brief', { initiativeId: run.initiativeId });
    return draftBrief(t, actorOf(user, context), runId, body);
  });
  return json({ id }, 201);
});
