import { recordAudit } from '@/features/audit/audit.server';
import { resultCsv } from '@/features/runs/resultCsv';
import { DownloadQuery } from '@/features/analyses/analysisApi.schema';
import { readableRun } from '@/features/runs/runAccess';
import { authorize } from '@/lib/server/authorize';
import { cautionText } from '@/lib/cautions';
import { conflict } from '@/lib/server/errors';
import { attachment, clientAddress, endpoint, parseQuery, requireUser, uuidParam } from '@/lib/server/http';

/**
 * GET /api/runs/{runId}/download?format=json|csv: the result as JSON (with its provenance
 * and caution) or the tables as CSV (caution first, formula-injection safe). Audited.
 */
export const GET = endpoint(async (context) => {
  const user = requireUser(context.locals);
  const runId = uuidParam(context.params.runId, 'That run');
  const { format } = parseQuery(context.url, DownloadQuery);
  const body = await context.locals.db(async (t) => {
    const run = await readableRun(t, user, runId, { withResult: true });
    authorize(user, 'export', 'Run', { initiativeId: run.initiativeId });
    if (run.status !== 'succeeded' || !run.result) throw conflict('Only a finished run has results to download.');
    await recordAudit(t, {
      action: 'run.downloaded', actorId: user.id, subjectType: 'run', subjectId: runId, initiativeId: run.initiativeId,
      clientAddress: clientAddress(context), details: { format, specHash: run.specHash, extractSha256: run.extractSha256, engineVersion: run.engineVersion },
    });
    if (format === 'csv') return resultCsv(run.result, run.spec);
    return JSON.stringify({
      caution: cautionText(), exploratory: run.exploratory, runId: run.id, analysisId: run.analysisId,
      extractVersionId: run.extractVersionId, extractSha256: run.extractSha256, specHash: run.specHash, engineVersion: run.engineVersion,
      seed: run.seed, startedBy: run.startedBy.name, queuedAt: run.queuedAt, finishedAt: run.finishedAt, spec: run.spec, result: run.result,
    }, null, 2);
  });
  return attachment(body, format, `crossgrain-run-${runId.slice(0, 8)}.${format}`);
});
