import { compareQueryRuns } from '@/features/runs/compareRuns.server';
import { endpoint, json, requireUser } from '@/lib/server/http';

/**
 * GET /api/runs/compare?runs=ID,ID[,ID,ID]: two to four runs side by side: the differing
 * specification fields in words, reference warnings, and every figure with each run's
 * change from the first (400 beyond four runs or for a subgroup screen; 404 for a run you
 * cannot read).
 */
export const GET = endpoint(async ({ locals, url }) => {
  const user = requireUser(locals);
  return json(await locals.db((t) => compareQueryRuns(t, user, url.searchParams)));
});
