import { actorOf, readableBrief } from '@/features/briefs/briefAccess';
import { recordDownload, storedVersion } from '@/features/briefs/briefs.server';
import { PdfQuery } from '@/features/briefs/briefs.schema';
import { authorize } from '@/lib/server/authorize';
import { notFound } from '@/lib/server/errors';
import { endpoint, parseQuery, requireUser, uuidParam } from '@/lib/server/http';

/**
 * GET /api/briefs/{briefId}/pdf[?version=N]: the latest published version as a PDF, or an
 * earlier one; a retracted brief's copies carry the retraction. Audited as `brief.downloaded`.
 */
export const GET = endpoint(async (context) => {
  const user = requireUser(context.locals);
  const briefId = uuidParam(context.params.briefId, 'That brief');
  const { version } = parseQuery(context.url, PdfQuery);
  const stored = await context.locals.db(async (t) => {
    const brief = await readableBrief(t, user, briefId);
    authorize(user, 'export', 'Brief', { initiativeId: brief.initiativeId }, { hide: true });
    const found = await storedVersion(t, briefId, version);
    if (!found) throw notFound(version ? `Version ${version} of that brief` : 'A published version of that brief');
    await recordDownload(t, actorOf(user, context), brief, found.version);
    return found;
  });
  return new Response(new Uint8Array(stored.pdf), {
    status: 200,
    headers: {
      'Content-Type': 'application/pdf',
      'Content-Disposition': `attachment; filename="brief-${briefId.slice(0, 8)}-v${stored.version}.pdf"`,
      'Cache-Control': 'private, no-store',
      'X-Content-SHA256': stored.sha256,
    },
  });
});
