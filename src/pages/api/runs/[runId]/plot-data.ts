import { matchesTag, plotDataOf } from '@/features/runs/plotData';
import { quickReadableResult, readableRun } from '@/features/runs/runAccess';
import { notFound } from '@/lib/server/errors';
import { endpoint, requireUser, uuidParam } from '@/lib/server/http';

/**
 * GET /api/runs/{runId}/plot-data: what the results page's plots draw (plotInput of the
 * run's result), for a succeeded run only, under the same access check as the page (404
 * for a run the caller may not read). A finished run's plot data never change, so the
 * answer carries an entity tag and the browser keeps it; `no-cache` makes it ask again on
 * every view (a 304 without a body when unchanged), so the access check runs every time
 * and a shared browser never shows one person's plots to the next. When this process has
 * the result already, the check is the run read along with the session (quickReadableResult).
 */
export const GET = endpoint(async ({ locals, params, request }) => {
  const user = requireUser(locals);
  const runId = uuidParam(params.runId, 'That run');
  let result = await quickReadableResult(user, runId, locals.pageRead);
  if (!result) {
    const run = await locals.db((t) => readableRun(t, user, runId, { withResult: true }));
    if (run.status !== 'succeeded' || !run.result) throw notFound('The plot data of that run');
    result = run.result;
  }
  const { body, etag } = plotDataOf(result, null);
  const headers = { ETag: etag, 'Cache-Control': 'private, no-cache', Vary: 'Cookie, Authorization' };
  if (matchesTag(request.headers.get('if-none-match'), etag)) return new Response(null, { status: 304, headers });
  return new Response(body, { status: 200, headers: { ...headers, 'Content-Type': 'application/json; charset=utf-8' } });
});
