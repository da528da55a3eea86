/**
 * A finished run made as a user makes one: the analysis is created and its run started
 * over HTTP by the analyst, and the run is executed in the test's own process (the
 * product's executeRun, as the worker would), for the API tests that need results.
 */
import { expect } from 'vitest';
import { executeRun } from '@/features/runs/executeRun';
import type { ApiClient } from './http';

export async function finishedRunOverHttp(
  analyst: ApiClient,
  analystId: string,
  analysis: { initiativeId: string; extractVersionId: string; title: string; question: string; prespecified?: boolean; spec: Record<string, unknown> },
): Promise<{ analysisId: string; runId: string }> {
  const created = await analyst.request('POST', '/api/analyses', { prespecified: false, ...analysis });
  expect(created.status).toBe(201);
  const analysisId: string = (await created.json()).id;
  const started = await analyst.request('POST', `/api/analyses/${analysisId}/runs`, {});
  expect(started.status).toBe(202);
  const runId: string = (await started.json()).runId;
  expect(await executeRun(runId, analystId, { threads: 0 })).toBe('succeeded');
  return { analysisId, runId };
}
