/**
 * A small world for operations tests: one initiative with a signed-in-able analyst (and
 * optionally a clinician and auditor), a ready extract of the synthetic call-back cohort,
 * and helpers to create an analysis and queue a run over HTTP.
 */
import { expect } from 'vitest';
import type { Spec } from '@/engine/boundary/schemas';
import { parseSingleSpec } from '@/features/analyses/screenSpecs';
import { generateCallBackCohort } from '@/features/extracts/demoCohorts';
import { hashPassword } from '@/lib/server/passwords';
import { makeReadyExtract } from './extractFactory';
import { addMember, makeInitiative, makeUser } from './factories';
import { ApiClient } from './http';

export const WORLD_PASSWORD = 'harbour-lantern-sedge';

export const CALL_BACK_SPEC: Spec = parseSingleSpec({
  outcome: { column: 'readmitted_30d', type: 'binary' },
  exposure: { column: 'call_back', reference: '0' },
  modifier: { column: 'age_band', type: 'categorical', reference: '18-44' },
  covariates: [{ column: 'comorbidity_score', type: 'continuous' }],
  model: 'logistic',
  ci: { level: 0.95, method: 'delta' },
});

export interface World {
  initiativeId: string;
  extractId: string;
  versionId: string;
  analyst: { id: string; email: string };
}

/** An initiative with one analyst and a ready extract (rows of the synthetic cohort). */
export async function makeWorld(name: string, rows = 600): Promise<World> {
  const analyst = await makeUser({ passwordHash: await hashPassword(WORLD_PASSWORD) });
  const initiativeId = (await makeInitiative(name)).id;
  await addMember(initiativeId, analyst.id, 'analyst');
  const { extractId, versionId } = await makeReadyExtract(analyst.id, initiativeId, generateCallBackCohort({ rows }).csv);
  return { initiativeId, extractId, versionId, analyst };
}

/** A client signed in as the world's analyst. */
export async function signedInAnalyst(world: World): Promise<ApiClient> {
  const client = new ApiClient();
  expect((await client.signIn(world.analyst.email, WORLD_PASSWORD)).status).toBe(204);
  return client;
}

/** Creates an analysis over HTTP and returns its id. */
export async function createAnalysis(client: ApiClient, world: World, title = 'By age band'): Promise<string> {
  const response = await client.request('POST', '/api/analyses', {
    initiativeId: world.initiativeId, extractVersionId: world.versionId, title,
    question: 'Does the call-back help older patients more?', prespecified: false, spec: CALL_BACK_SPEC,
  });
  expect(response.status).toBe(201);
  return ((await response.json()) as { id: string }).id;
}

/** Queues a run of an analysis over HTTP and returns its id. */
export async function queueRun(client: ApiClient, analysisId: string): Promise<string> {
  const response = await client.request('POST', `/api/analyses/${analysisId}/runs`, {});
  expect(response.status).toBeLessThan(300);
  return ((await response.json()) as { runId: string }).runId;
}

/** Polls GET /api/runs/{id} until the run has ended; returns its last body. */
export async function waitForRunEnd(client: ApiClient, runId: string, timeoutMs = 45_000): Promise<Record<string, unknown>> {
  const until = Date.now() + timeoutMs;
  let last: Record<string, unknown> = {};
  while (Date.now() < until) {
    const response = await client.request('GET', `/api/runs/${runId}`);
    if (response.ok) {
      last = (await response.json()) as Record<string, unknown>;
      if (!['queued', 'running'].includes(String(last.status))) return last;
    }
    await new Promise((resolve) => setTimeout(resolve, 250));
  }
  throw new Error(`Run ${runId} did not end in time; last seen ${JSON.stringify(last).slice(0, 300)}`);
}
