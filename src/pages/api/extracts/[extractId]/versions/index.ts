import { NewVersionQuery } from '@/features/extracts/extracts.schema';
import { extractScope } from '@/features/extracts/extracts.server';
import { keepAsked, receiveUpload } from '@/features/extracts/intake.server';
import { authorize } from '@/lib/server/authorize';
import { notFound } from '@/lib/server/errors';
import { clientAddress, endpoint, json, parseQuery, requireUser, uuidParam } from '@/lib/server/http';

/** POST /api/extracts/{extractId}/versions: uploads version n+1 of an extract (202). */
export const POST = endpoint(async (context) => {
  const user = requireUser(context.locals);
  const extractId = uuidParam(context.params.extractId, 'That extract');
  const extract = await context.locals.db((t) => extractScope(t, extractId));
  if (!extract) throw notFound('That extract');
  authorize(user, 'read', 'Extract', { initiativeId: extract.initiativeId }, { hide: true });
  authorize(user, 'update', 'Extract', { initiativeId: extract.initiativeId });
  const { drop } = parseQuery(context.url, NewVersionQuery);
  const accepted = await receiveUpload({ id: user.id, clientAddress: clientAddress(context) }, { extractId }, context.request, { dropColumns: drop, ...keepAsked(context.url, context.request) });
  return json({ extractId: accepted.extractId, versionId: accepted.versionId }, 202);
});
