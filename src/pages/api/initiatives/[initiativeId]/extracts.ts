import { NewExtractQuery } from '@/features/extracts/extracts.schema';
import { listExtracts } from '@/features/extracts/extracts.server';
import { keepAsked, receiveUpload } from '@/features/extracts/intake.server';
import { authorize, requireMember } from '@/lib/server/authorize';
import { clientAddress, endpoint, json, parseQuery, requireUser, uuidParam } from '@/lib/server/http';

/** GET /api/initiatives/{initiativeId}/extracts: the initiative's extracts. */
export const GET = endpoint(async ({ locals, params }) => {
  const initiativeId = uuidParam(params.initiativeId, 'That initiative');
  requireMember(locals.user, initiativeId);
  authorize(locals.user, 'read', 'Extract', { initiativeId });
  return json(await locals.db((t) => listExtracts(t, initiativeId)));
});

/**
 * POST /api/initiatives/{initiativeId}/extracts?name=…[&drop=col,col][&keep=col&keepReason=…]: uploads a new extract, as a raw
 * `text/csv` body or a file in multipart form data. 202 with `{ extractId, versionId }`;
 * screening, profiling and storing finish in the background (poll GET /api/extracts/{id}).
 * Columns named in `drop` are skipped while reading: their values are never stored.
 * A column flagged by its name alone is kept with `keep` and the stated `keepReason`.
 */
export const POST = endpoint(async (context) => {
  const user = requireUser(context.locals);
  const initiativeId = uuidParam(context.params.initiativeId, 'That initiative');
  requireMember(user, initiativeId);
  authorize(user, 'create', 'Extract', { initiativeId });
  const { name, drop } = parseQuery(context.url, NewExtractQuery);
  const accepted = await receiveUpload({ id: user.id, clientAddress: clientAddress(context) }, { initiativeId, name }, context.request, { dropColumns: drop, ...keepAsked(context.url, context.request) });
  return json({ extractId: accepted.extractId, versionId: accepted.versionId }, 202);
});
