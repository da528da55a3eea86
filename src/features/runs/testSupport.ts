/**
 * Real engine results for the runs tests: the engine's runAnalysis on the SYNTHETIC demo
 * cohorts (src/features/extracts/demoCohorts.ts), read as an upload is (engineInput.ts).
 * Each result is computed once per test file. Not imported by product code.
 */
import { ResultSchema, SpecSchema, type Result, type Spec } from '../../engine/boundary/schemas';
import { runAnalysis } from '../../engine/index';
import type { EngineData } from '../../engine/types';
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

/** Call-back: 30-day readmission on call_back by age band, adjusted for sex, comorbidity and site. */
export const CALL_BACK_SPEC: Spec = SpecSchema.parse({
  outcome: { column: 'readmitted_30d', type: 'binary' },
  exposure: { column: 'call_back', reference: '0' },
  modifier: { column: 'age_band', type: 'categorical', reference: '18-44' },
  covariates: [
    { column: 'sex', type: 'categorical', reference: 'F' },
    { column: 'comorbidity_score', type: 'continuous' },
    { column: 'site', type: 'categorical', reference: 'Tern Valley General' },
  ],
  model: 'logistic',
  ci: { level: 0.95, method: 'delta' },
  effectMeasure: 'OR',
  alpha: 0.05,
  multiplicity: 'holm',
});

/** Up-and-about: length of stay on early mobility with frailty as a continuous modifier. */
export const UP_AND_ABOUT_SPEC: Spec = SpecSchema.parse({
  outcome: { column: 'length_of_stay_days', type: 'continuous' },
  exposure: { column: 'early_mobility', reference: '0' },
  modifier: { column: 'frailty_score', type: 'continuous' },
  covariates: [
    { column: 'age_band', type: 'categorical', reference: '18-64' },
    { column: 'admission_type', type: 'categorical', reference: 'elective' },
    { column: 'site', type: 'categorical', reference: 'Tern Valley General' },
  ],
  model: 'linear',
  ci: { level: 0.95, method: 'delta' },
});

/** Runs the engine and checks its result against the strict result schema. */
export async function engineResult(cohort: 'call-back' | 'up-and-about', spec: Spec): Promise<Result> {
  const data = cohort === 'call-back' ? callBack() : upAndAbout();
  const result = await runAnalysis(data, spec, { threads: 0 });
  return ResultSchema.parse(result);
}
