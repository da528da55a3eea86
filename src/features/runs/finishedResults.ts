/**
 * Results of finished runs, parsed once per process. A succeeded run's stored result never
 * changes (runs.result is written once, when the run finishes), so a results page need not
 * transfer and parse the same large jsonb on every view: the run row is still read under
 * row-level security on each request, and only its result comes from here.
 * Verification re-runs compare the stored bytes themselves, never this copy.
 */
import type { Result } from '@/engine/boundary/schemas';

/** Enough for the runs people are reading now; each entry is one parsed result. */
const CAPACITY = 64;
const results = new Map<string, Result>();

/** The parsed result of a finished run, when this process has read it before. */
export function cachedResult(runId: string): Result | undefined {
  const result = results.get(runId);
  if (result !== undefined) {
    // Most recently used last, so the oldest is the one dropped.
    results.delete(runId);
    results.set(runId, result);
  }
  return result;
}

/** Keeps the parsed result of a succeeded run. */
export function keepResult(runId: string, result: Result): void {
  results.delete(runId);
  results.set(runId, result);
  if (results.size > CAPACITY) results.delete(results.keys().next().value as string);
}

/**
 * Memoizes a pure function of a finished result (its tables, its plot data) on the parsed
 * result object itself, so it is computed once per cached result.
 */
export function perResult<Key, Value>(compute: (result: Result, key: Key) => Value, keyOf: (key: Key) => string): (result: Result, key: Key) => Value {
  const memo = new WeakMap<Result, Map<string, Value>>();
  return (result, key) => {
    let byKey = memo.get(result);
    if (!byKey) memo.set(result, (byKey = new Map()));
    const name = keyOf(key);
    let value = byKey.get(name);
    if (value === undefined) byKey.set(name, (value = compute(result, key)));
    return value;
  };
}
