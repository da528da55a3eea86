import { actorOf, readableBrief } from '@/features/briefs/briefAccess';
import { briefView, updateDraft } from '@/features/briefs/briefs.server';
import { UpdateBriefBody } from '@/features/briefs/briefs.schema';
import { authorize } from '@/lib/server/authorize';
import { notFound } from '@/lib/server/errors';
import { endpoint, json, parseBody, requireUser, uuidParam } from '@/lib/server/http';

/** GET /api/briefs/{briefId}: the brief, its versions, retraction and newer work. Every member. */
export const GET = endpoint(async ({ locals, params }) => {
  const user = requireUser(locals);
  const briefId = uuidParam(params.briefId, 'That brief');
  return json(await locals.db(async (t) => {
    await readableBrief(t, user, briefId);
    const view = await briefView(t, briefId);
    if (!view) throw notFound('That brief');
    return view;
  }));
});

/** PATCH /api/briefs/{briefId}: change a draft's title, summary, plot or own cautions (analysts; 409 once published). */
export const PATCH = endpoint(async (context) => {
  const user = requireUser(context.locals);
  const briefId = uuidParam(context.params.briefId, 'That brief');
  const body = await parseBody(context.request, UpdateBriefBody);
  return json(await context.locals.db(async (t) => {
    const brief = await readableBrief(t, user, briefId, { lock: true });
    authorize(user, 'update', 'Brief', { initiativeId: brief.initiativeId });
    await updateDraft(t, actorOf(user, context), brief, body);
    return briefView(t, briefId);
  }));
});
