/**
 * Reads back the result a run stored (the `runs.result` jsonb), with the result schema.
 *
 * Results stored by an earlier engine may lack fields added since (per-column missing
 * counts, the pooled risk difference under both variances, the bootstrap's failures by
 * reason, its flag and rule); the schema declares each of those nullable with default
 * null, so such a result reads back with null there, "not recorded by the engine that made
 * it", and still displays. A stored value that does not have the result's shape is
 * refused with a message rather than shown wrong.
 */
import { ResultSchema, type Result } from '@/engine/boundary/schemas';
import { AppError } from '@/lib/server/errors';

/** The stored result as a Result, or null when the run has none (not finished, or not read). */
export function parseStoredResult(stored: unknown): Result | null {
  if (stored === null || stored === undefined) return null;
  const parsed = ResultSchema.safeParse(stored);
  if (parsed.success) return parsed.data;
  throw new AppError(
    500,
    'stored-result-unreadable',
    'The stored result of this run does not have the shape this version of Crossgrain reads, so it is not shown. Re-run the analysis, or ask an administrator to look at the run.',
    { issues: parsed.error.issues.slice(0, 5).map((issue) => ({ path: issue.path.join('.'), message: issue.message })) },
  );
}
