import { actorOf, readableBrief } from '@/features/briefs/briefAccess';
import { briefView, retractBrief } from '@/features/briefs/briefs.server';
import { RetractionBody } from '@/features/briefs/briefs.schema';
import { authorize } from '@/lib/server/authorize';
import { endpoint, json, parseBody, requireUser, uuidParam } from '@/lib/server/http';

/** POST /api/briefs/{briefId}/retraction: retract a published brief with a reason (analysts); every version is marked. */
export const POST = endpoint(async (context) => {
  const user = requireUser(context.locals);
  const briefId = uuidParam(context.params.briefId, 'That brief');
  const { reason } = await parseBody(context.request, RetractionBody);
  return json(await context.locals.db(async (t) => {
    const brief = await readableBrief(t, user, briefId, { lock: true });
    authorize(user, 'publish', 'Brief', { initiativeId: brief.initiativeId });
    await retractBrief(t, actorOf(user, context), brief, reason);
    return briefView(t, briefId);
  }));
});
