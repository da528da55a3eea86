import { recordAudit } from '@/features/audit/audit.server';
import { RowsQuery } from '@/features/extracts/extracts.schema';
import { previewRows } from '@/features/extracts/columns.server';
import { authorize } from '@/lib/server/authorize';
import { ExtractVersion, Initiative } from '../../../../../../../db/models';
import { notFound } from '@/lib/server/errors';
import { clientAddress, endpoint, json, parseQuery, requireUser, uuidParam } from '@/lib/server/http';

/**
 * GET /api/extracts/{extractId}/versions/{versionId}/rows?page=&pageSize=&sort=&direction=:
 * one page of row-level data, sorted on the server. Every call is an audit event.
 */
export const GET = endpoint(async (context) => {
  const user = requireUser(context.locals);
  const extractId = uuidParam(context.params.extractId, 'That extract');
  const versionId = uuidParam(context.params.versionId, 'That version');
  const query = parseQuery(context.url, RowsQuery);
  const page = await context.locals.db(async (t) => {
    const version = await ExtractVersion.findOne({
      attributes: ['initiativeId', 'versionNumber'],
      where: { id: versionId, extractId },
      include: [{ model: Initiative, as: 'initiative', attributes: ['readersSeeRows'], required: true }],
      transaction: t,
    });
    if (!version?.initiative) throw notFound('That version');
    authorize(user, 'read', 'ExtractRows', { initiativeId: version.initiativeId, readersSeeRows: version.initiative.readersSeeRows });
    const rows = await previewRows(t, versionId, query);
    await recordAudit(t, {
      action: 'extract.rows-viewed', actorId: user.id, subjectType: 'extract', subjectId: extractId, initiativeId: version.initiativeId,
      clientAddress: clientAddress(context),
      details: { versionId, version: version.versionNumber, page: query.page, pageSize: query.pageSize, sort: query.sort ?? null, rowsShown: rows.rows.length },
    });
    return rows;
  });
  return json(page);
});
