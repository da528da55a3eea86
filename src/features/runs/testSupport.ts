/**
 * Real engine results for the runs tests: the engine's runAnalysis on the SYNTHETIC demo
 * cohorts (src/features/extracts/demoCohorts.ts), read as an upload is (engineInput.ts).
 * Each result is computed once per test file. Not imported by product code.
 */
import { ResultSchema, type Result, type Spec } from '@/engine/boundary/schemas';
import { parseSingleSpec } from '../analyses/screenSpecs';
import { runAnalysis } from '@/engine/index';
import type { EngineData } from '@/engine/types';
import { CALL_BACK_DEMO_SPEC, UP_AND_ABOUT_DEMO_SPEC } from '../analyses/demoSpecs';
import { generateCallBackCohort, generateUpAndAboutCohort } from '../extracts/demoCohorts';
import { engineDataOfCsv } from './engineInput';

let callBackData: EngineData | null = null;
let upAndAboutData: EngineData | null = null;

function callBack(): EngineData {
  callBackData ??= engineDataOfCsv(generateCallBackCohort().csv);
  return callBackData;
}

function upAndAbout(): EngineData {
  upAndAboutData ??= engineDataOfCsv(generateUpAndAboutCohort().csv);
  return upAndAboutData;
}

/** The demo analyses' specifications (src/features/analyses/demoSpecs.ts), checked by the spec schema. */
export const CALL_BACK_SPEC: Spec = parseSingleSpec(CALL_BACK_DEMO_SPEC);
export const UP_AND_ABOUT_SPEC: Spec = parseSingleSpec(UP_AND_ABOUT_DEMO_SPEC);

/** Runs the engine and checks its result against the strict result schema. */
export async function engineResult(cohort: 'call-back' | 'up-and-about', spec: Spec): Promise<Result> {
  const data = cohort === 'call-back' ? callBack() : upAndAbout();
  const result = await runAnalysis(data, spec, { threads: 0 });
  return ResultSchema.parse(result);
}
