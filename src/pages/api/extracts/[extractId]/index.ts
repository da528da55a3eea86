import { getExtract } from '@/features/extracts/extracts.server';
import { authorize } from '@/lib/server/authorize';
import { notFound } from '@/lib/server/errors';
import { endpoint, json, requireUser, uuidParam } from '@/lib/server/http';

/** GET /api/extracts/{extractId}: the extract and the status of each version and upload. */
export const GET = endpoint(async ({ locals, params }) => {
  requireUser(locals);
  const extractId = uuidParam(params.extractId, 'That extract');
  const extract = await locals.db((t) => getExtract(t, extractId, { withProfiles: true }));
  if (!extract) throw notFound('That extract');
  authorize(locals.user, 'read', 'Extract', { initiativeId: extract.initiativeId }, { hide: true });
  return json(extract);
});
