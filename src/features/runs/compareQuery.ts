/**
 * Which runs a comparison shows, from its query: `runs=ID,ID,…` (comma-separated), `run=ID`
 * repeated (the analysis page's checkboxes), or the older `a=ID&b=ID`. Two to four
 * distinct run ids, in the order given; anything else is a clear 400.
 */
import { z } from 'zod';
import { badRequest } from '@/lib/server/errors';
import { MAX_COMPARED_RUNS } from './runComparison';

/** The run ids asked for, or an empty list when the query names none (the how-to page). */
export function comparedRunIds(params: URLSearchParams): string[] {
  const listed = [
    ...params.getAll('runs').flatMap((value) => value.split(',')),
    ...params.getAll('run'),
    ...['a', 'b'].flatMap((name) => params.getAll(name)),
  ].map((value) => value.trim()).filter((value) => value !== '');
  const ids = listed;
  if (ids.length === 0) return [];
  if (ids.length > MAX_COMPARED_RUNS) {
    throw badRequest(`A comparison shows at most ${MAX_COMPARED_RUNS} runs; ${ids.length} were chosen. Choose up to ${MAX_COMPARED_RUNS}.`);
  }
  if (ids.length < 2) throw badRequest('Choose at least two runs to compare.');
  const invalid = ids.find((id) => !z.uuid().safeParse(id).success);
  if (invalid !== undefined) throw badRequest(`“${invalid.slice(0, 40)}” is not a run id.`);
  return ids;
}
