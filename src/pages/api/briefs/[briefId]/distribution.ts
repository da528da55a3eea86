import { actorOf, readableBrief } from '@/features/briefs/briefAccess';
import { distributeBrief } from '@/features/briefs/briefMail.server';
import { DistributionBody } from '@/features/briefs/briefs.schema';
import { authorize } from '@/lib/server/authorize';
import { endpoint, json, parseBody, requireUser, uuidParam } from '@/lib/server/http';

/**
 * POST /api/briefs/{briefId}/distribution: e-mail the latest version, PDF attached, to the
 * initiative's distribution list plus the given addresses (analysts). Answers 202. Each
 * recipient and the send are audited as `brief.distributed`.
 */
export const POST = endpoint(async (context) => {
  const user = requireUser(context.locals);
  const briefId = uuidParam(context.params.briefId, 'That brief');
  const { recipients } = await parseBody(context.request, DistributionBody);
  return json(await context.locals.db(async (t) => {
    const brief = await readableBrief(t, user, briefId, { lock: true });
    authorize(user, 'publish', 'Brief', { initiativeId: brief.initiativeId });
    return distributeBrief(t, actorOf(user, context), brief, recipients);
  }), 202);
});
