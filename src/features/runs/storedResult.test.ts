import { beforeAll, describe, expect, it } from 'vitest';
import type { Result } from '@/engine/boundary/schemas';
import { AppError } from '@/lib/server/errors';
import { parseStoredResult } from './storedResult';
import { CALL_BACK_SPEC, engineResult } from './testSupport';

/** What jsonb gives back: the result as JSON (no undefined, no typed arrays). */
const stored = (value: unknown): unknown => JSON.parse(JSON.stringify(value));

describe('parseStoredResult', () => {
  let result: Result;
  beforeAll(async () => {
    // A bootstrap run, so the result carries the bootstrap accounting (engine on the synthetic call-back cohort).
    result = await engineResult('call-back', { ...CALL_BACK_SPEC, ci: { level: 0.95, method: 'bootstrap', replicates: 200, seed: 3 } });
  }, 60_000);

  it('reads a current result back exactly as the engine gave it', () => {
    expect(result.bootstrap?.failures).not.toBeNull();
    expect(result.missingByColumn).not.toBeNull();
    expect(parseStoredResult(stored(result))).toEqual(stored(result));
  });

  it('gives null for a run without a result', () => {
    expect(parseStoredResult(null)).toBeNull();
    expect(parseStoredResult(undefined)).toBeNull();
  });

  it('reads a result stored before the newer fields, with null where they were not recorded', () => {
    const old = structuredClone(stored(result)) as Record<string, unknown> & Pick<Result, 'stratifiedTables' | 'bootstrap'>;
    delete old.missingByColumn;
    const bootstrap: Record<string, unknown> = { ...old.bootstrap };
    delete bootstrap.failures;
    delete bootstrap.flagged;
    delete bootstrap.rule;
    old.bootstrap = bootstrap as Result['bootstrap'];
    const tables = old.stratifiedTables;
    expect(tables).not.toBeNull();
    const mantelHaenszel: Record<string, unknown> = { ...tables!.mantelHaenszel };
    delete mantelHaenszel.riskDifferenceVariances;
    old.stratifiedTables = { ...tables!, mantelHaenszel: mantelHaenszel as NonNullable<Result['stratifiedTables']>['mantelHaenszel'] };

    const read = parseStoredResult(old);
    expect(read?.missingByColumn).toBeNull();
    expect(read?.bootstrap?.failures).toBeNull();
    expect(read?.bootstrap?.flagged).toBeNull();
    expect(read?.bootstrap?.rule).toBeNull();
    expect(read?.bootstrap?.failed).toBe(result.bootstrap?.failed);
    expect(read?.stratifiedTables?.mantelHaenszel.riskDifferenceVariances).toBeNull();
    expect(read?.interaction).toEqual(stored(result.interaction));
  });

  it('refuses a stored value without the result shape, naming the problem', () => {
    const broken = { ...(stored(result) as object), interaction: null };
    expect(() => parseStoredResult(broken)).toThrow(AppError);
    try {
      parseStoredResult(broken);
    } catch (error) {
      expect(error).toMatchObject({ status: 500, code: 'stored-result-unreadable' });
      expect(JSON.stringify((error as AppError).details)).toContain('interaction');
    }
  });
});
