import { ConfirmVersionBody } from '@/features/extracts/extracts.schema';
import { confirmVersion, extractScope } from '@/features/extracts/extracts.server';
import { authorize } from '@/lib/server/authorize';
import { notFound } from '@/lib/server/errors';
import { clientAddress, endpoint, noContent, parseBody, requireUser, uuidParam } from '@/lib/server/http';

/**
 * POST /api/extracts/{extractId}/versions/{versionId}/confirm: signs the de-identification
 * attestation and confirms the dictionary (omit `columns` to accept the inferred types);
 * the version becomes ready and never changes again (204).
 */
export const POST = endpoint(async (context) => {
  const user = requireUser(context.locals);
  const extractId = uuidParam(context.params.extractId, 'That extract');
  const versionId = uuidParam(context.params.versionId, 'That version');
  const body = await parseBody(context.request, ConfirmVersionBody);
  await context.locals.db(async (t) => {
    const extract = await extractScope(t, extractId);
    if (!extract) throw notFound('That extract');
    authorize(user, 'read', 'Extract', { initiativeId: extract.initiativeId }, { hide: true });
    authorize(user, 'update', 'Extract', { initiativeId: extract.initiativeId });
    await confirmVersion(t, { id: user.id, clientAddress: clientAddress(context), displayName: user.displayName }, extractId, versionId, body);
  });
  return noContent();
});
