import { extractScope } from '@/features/extracts/extracts.server';
import { cancelIntake } from '@/features/extracts/intake.server';
import { authorize } from '@/lib/server/authorize';
import { notFound } from '@/lib/server/errors';
import { clientAddress, endpoint, json, requireUser, uuidParam } from '@/lib/server/http';

/** POST /api/extracts/{extractId}/versions/{versionId}/cancel: stops an upload still being processed; nothing is kept. */
export const POST = endpoint(async (context) => {
  const user = requireUser(context.locals);
  const extractId = uuidParam(context.params.extractId, 'That extract');
  const versionId = uuidParam(context.params.versionId, 'That upload');
  const cancelled = await context.locals.db(async (t) => {
    const extract = await extractScope(t, extractId);
    if (!extract) throw notFound('That upload');
    authorize(user, 'read', 'Extract', { initiativeId: extract.initiativeId }, { hide: true });
    authorize(user, 'create', 'Extract', { initiativeId: extract.initiativeId });
    return cancelIntake(t, { id: user.id, clientAddress: clientAddress(context) }, extractId, versionId);
  });
  return json({ cancelled });
});
