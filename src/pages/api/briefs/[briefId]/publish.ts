import { actorOf, readableBrief } from '@/features/briefs/briefAccess';
import { publishBrief } from '@/features/briefs/briefs.server';
import { authorize } from '@/lib/server/authorize';
import { endpoint, json, requireUser, uuidParam } from '@/lib/server/http';

/** POST /api/briefs/{briefId}/publish: freeze the draft as version 1 (analysts). Audited as `brief.published`. */
export const POST = endpoint(async (context) => {
  const user = requireUser(context.locals);
  const briefId = uuidParam(context.params.briefId, 'That brief');
  const version = await context.locals.db(async (t) => {
    const brief = await readableBrief(t, user, briefId, { lock: true });
    authorize(user, 'publish', 'Brief', { initiativeId: brief.initiativeId });
    return publishBrief(t, actorOf(user, context), brief);
  });
  return json({ version });
});
