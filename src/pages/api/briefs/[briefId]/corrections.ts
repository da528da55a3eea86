import { actorOf, readableBrief } from '@/features/briefs/briefAccess';
import { correctBrief } from '@/features/briefs/briefs.server';
import { CorrectionBody } from '@/features/briefs/briefs.schema';
import { authorize } from '@/lib/server/authorize';
import { endpoint, json, parseBody, requireUser, uuidParam } from '@/lib/server/http';

/** POST /api/briefs/{briefId}/corrections: publish the next version with a note saying what changed (analysts). */
export const POST = endpoint(async (context) => {
  const user = requireUser(context.locals);
  const briefId = uuidParam(context.params.briefId, 'That brief');
  const body = await parseBody(context.request, CorrectionBody);
  const version = await context.locals.db(async (t) => {
    const brief = await readableBrief(t, user, briefId, { lock: true });
    authorize(user, 'publish', 'Brief', { initiativeId: brief.initiativeId });
    return correctBrief(t, actorOf(user, context), brief, body);
  });
  return json({ version }, 201);
});
