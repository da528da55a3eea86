import { ArchiveBody } from '@/features/extracts/extracts.schema';
import { extractScope, setArchived } from '@/features/extracts/extracts.server';
import { authorize } from '@/lib/server/authorize';
import { notFound } from '@/lib/server/errors';
import { clientAddress, endpoint, noContent, parseBody, requireUser, uuidParam } from '@/lib/server/http';

/** POST /api/extracts/{extractId}/archive: `{ "archived": true }` hides it from new analyses; false restores it (204). */
export const POST = endpoint(async (context) => {
  const user = requireUser(context.locals);
  const extractId = uuidParam(context.params.extractId, 'That extract');
  const body = await parseBody(context.request, ArchiveBody);
  await context.locals.db(async (t) => {
    const extract = await extractScope(t, extractId);
    if (!extract) throw notFound('That extract');
    authorize(user, 'read', 'Extract', { initiativeId: extract.initiativeId }, { hide: true });
    authorize(user, 'archive', 'Extract', { initiativeId: extract.initiativeId });
    await setArchived(t, { id: user.id, clientAddress: clientAddress(context) }, extractId, body.archived);
  });
  return noContent();
});
