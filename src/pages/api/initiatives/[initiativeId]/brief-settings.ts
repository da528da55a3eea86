import { actorOf } from '@/features/briefs/briefAccess';
import { briefSettings, saveBriefSettings } from '@/features/briefs/briefs.server';
import { BriefSettingsBody } from '@/features/briefs/briefs.schema';
import { authorize, requireMember } from '@/lib/server/authorize';
import { endpoint, json, parseBody, requireUser, uuidParam } from '@/lib/server/http';

/** GET /api/initiatives/{initiativeId}/brief-settings: the small-cell threshold and paper size. Every member. */
export const GET = endpoint(async ({ locals, params }) => {
  const initiativeId = uuidParam(params.initiativeId, 'That initiative');
  requireMember(locals.user, initiativeId);
  return json(await locals.db((t) => briefSettings(t, initiativeId)));
});

/** PUT /api/initiatives/{initiativeId}/brief-settings: change them (analysts); published versions keep theirs. */
export const PUT = endpoint(async (context) => {
  const user = requireUser(context.locals);
  const initiativeId = uuidParam(context.params.initiativeId, 'That initiative');
  requireMember(user, initiativeId);
  const body = await parseBody(context.request, BriefSettingsBody);
  authorize(user, 'publish', 'Brief', { initiativeId });
  return json(await context.locals.db(async (t) => {
    await saveBriefSettings(t, actorOf(user, context), initiativeId, body);
    return briefSettings(t, initiativeId);
  }));
});
