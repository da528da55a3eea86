import { QueryTypes } from 'sequelize';
import { recordAudit } from '../../../../../../features/audit/audit.server';
import { RowsQuery } from '../../../../../../features/extracts/extracts.schema';
import { previewRows } from '../../../../../../features/extracts/extracts.server';
import { authorize } from '../../../../../../lib/server/authorize';
import { sequelize } from '../../../../../../lib/server/db';
import { notFound } from '../../../../../../lib/server/errors';
import { clientAddress, endpoint, json, parseQuery, requireUser, uuidParam } from '../../../../../../lib/server/http';

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
    const [version] = await sequelize.query<{ initiative_id: string; readers_see_rows: boolean; version_number: number }>(
      `SELECT v.initiative_id, i.readers_see_rows, v.version_number FROM extract_versions v JOIN initiatives i ON i.id = v.initiative_id
        WHERE v.id = :versionId AND v.extract_id = :extractId`,
      { replacements: { versionId, extractId }, type: QueryTypes.SELECT, transaction: t },
    );
    if (!version) throw notFound('That version');
    authorize(user, 'read', 'ExtractRows', { initiativeId: version.initiative_id, readersSeeRows: version.readers_see_rows });
    const rows = await previewRows(t, versionId, query);
    await recordAudit(t, {
      action: 'extract.rows-viewed', actorId: user.id, subjectType: 'extract', subjectId: extractId, initiativeId: version.initiative_id,
      clientAddress: clientAddress(context),
      details: { versionId, version: version.version_number, page: query.page, pageSize: query.pageSize, sort: query.sort ?? null, rowsShown: rows.rows.length },
    });
    return rows;
  });
  return json(page);
});
