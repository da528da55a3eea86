import { recordAudit } from '@/features/audit/audit.server';
import { rawFileChunkCount, rawFileStream } from '@/features/extracts/rawFiles.server';
import { authorize } from '@/lib/server/authorize';
import { ExtractVersion, Initiative } from '../../../../../../../db/models';
import { notFound } from '@/lib/server/errors';
import { clientAddress, endpoint, requireUser, uuidParam } from '@/lib/server/http';

/**
 * GET /api/extracts/{extractId}/versions/{versionId}/file: the version's original upload,
 * byte for byte (its SHA-256 is the version's), read from the database chunk by chunk, so
 * any app server serves it. Row-level data: the same rule as the row preview, and every
 * download is an audit event.
 */
export const GET = endpoint(async (context) => {
  const user = requireUser(context.locals);
  const extractId = uuidParam(context.params.extractId, 'That extract');
  const versionId = uuidParam(context.params.versionId, 'That version');
  const found = await context.locals.db(async (t) => {
    const version = await ExtractVersion.findOne({
      attributes: ['initiativeId', 'versionNumber', 'byteCount', 'sha256'],
      where: { id: versionId, extractId },
      include: [{ model: Initiative, as: 'initiative', attributes: ['readersSeeRows'], required: true }],
      transaction: t,
    });
    if (!version?.initiative) throw notFound('That version');
    authorize(user, 'read', 'ExtractRows', { initiativeId: version.initiativeId, readersSeeRows: version.initiative.readersSeeRows });
    const chunks = await rawFileChunkCount(t, versionId);
    if (chunks === 0) throw notFound('The original file of that version');
    await recordAudit(t, {
      action: 'extract.file-downloaded', actorId: user.id, subjectType: 'extract', subjectId: extractId, initiativeId: version.initiativeId,
      clientAddress: clientAddress(context),
      details: { versionId, version: version.versionNumber, bytes: Number(version.byteCount), sha256: version.sha256 },
    });
    return { chunks, version };
  });
  return new Response(rawFileStream(user.id, versionId, found.chunks), {
    status: 200,
    headers: {
      'Content-Type': 'text/csv; charset=utf-8',
      'Content-Length': String(found.version.byteCount),
      'Content-Disposition': `attachment; filename="extract-v${found.version.versionNumber}.csv"`,
      'Cache-Control': 'no-store',
      'X-Content-Type-Options': 'nosniff',
    },
  });
});
