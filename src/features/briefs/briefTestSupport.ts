/**
 * A real engine result on an extract with a stratum of fewer than 11 people: the
 * SYNTHETIC call-back cohort (src/features/extracts/demoCohorts.ts) with nine invented
 * rows in an extra age band "90+". Not imported by product code.
 */
import { engineDataOfCsv } from '../runs/engineInput';
import { ResultSchema, type Result } from '@/engine/boundary/schemas';
import { runAnalysis } from '@/engine/index';
import { generateCallBackCohort } from '../extracts/demoCohorts';
import { CALL_BACK_SPEC } from '../runs/testSupport';
import type { BriefFacts } from './briefContent';

/** Nine invented people aged 90+: 5 with a call-back (2 readmitted), 4 without (1 readmitted). */
const SMALL_BAND_ROWS = [
  '1,1,90+,F,2,1,Tern Valley General', '1,1,90+,M,3,2,Tern Valley General', '0,1,90+,F,1,0,Tern Valley General',
  '0,1,90+,F,2,1,Tern Valley General', '0,1,90+,M,1,0,Tern Valley General', '1,0,90+,F,2,1,Tern Valley General',
  '0,0,90+,M,1,0,Tern Valley General', '0,0,90+,F,3,1,Tern Valley General', '0,0,90+,F,2,0,Tern Valley General',
];

export function smallStratumCsv(): string {
  return `${generateCallBackCohort({ rows: 900 }).csv}${SMALL_BAND_ROWS.join('\n')}\n`;
}

export async function smallStratumResult(): Promise<Result> {
  return ResultSchema.parse(await runAnalysis(engineDataOfCsv(smallStratumCsv()), CALL_BACK_SPEC, { threads: 0 }));
}

export const FACTS: BriefFacts = {
  analysisTitle: 'Call-back by age band', question: 'Does the nurse call-back reduce readmission more in older patients?',
  initiative: { name: 'Tern Valley call-back', organisation: 'Tern Valley (synthetic)', description: 'Synthetic demonstration data.' },
  runId: '00000000-0000-4000-8000-000000000001', extract: { name: 'Discharges (synthetic)', version: 1, sha256: 'a'.repeat(64) },
  engineVersion: 'test', seed: null, specHash: 'b'.repeat(64), prespecifiedAt: '2026-12-01T10:00:00.000Z', exploratory: false,
  analysesInInitiative: 3, signOff: { by: 'Dr Demo', at: '2026-12-02T09:00:00.000Z', meaning: 'Methods and numbers checked.' }, threshold: 11,
};
