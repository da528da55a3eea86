import { describe, expect, it } from 'vitest';
import type { Result } from '@/engine/boundary/schemas';
import { cachedResult, keepResult, perResult } from './finishedResults';

// Stand-ins: the cache holds results by identity and never looks inside them.
const fakeResult = (n: number) => ({ n }) as unknown as Result;

describe('finished results', () => {
  it('keeps a parsed result per run and drops the least recently used beyond 64', () => {
    const first = fakeResult(1);
    keepResult('run-first', first);
    for (let i = 0; i < 63; i++) keepResult(`run-${i}`, fakeResult(i));
    expect(cachedResult('run-first')).toBe(first); // used again: now the most recent
    keepResult('run-extra', fakeResult(99));
    expect(cachedResult('run-0')).toBeUndefined(); // the oldest unused one went
    expect(cachedResult('run-first')).toBe(first);
    expect(cachedResult('run-extra')).toBeDefined();
  });

  it('computes a function of a result once per result and key', () => {
    let calls = 0;
    const tablesOf = perResult((result: Result, spec: { level: number }) => {
      calls++;
      return { result, spec };
    }, (spec) => String(spec.level));
    const result = fakeResult(5);
    const once = tablesOf(result, { level: 1 });
    expect(tablesOf(result, { level: 1 })).toBe(once);
    expect(calls).toBe(1);
    tablesOf(result, { level: 2 });
    tablesOf(fakeResult(5), { level: 1 });
    expect(calls).toBe(3);
  });
});
