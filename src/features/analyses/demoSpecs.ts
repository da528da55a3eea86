/**
 * The specifications of the demo analyses, on the SYNTHETIC demo cohorts
 * (src/features/extracts/demoCohorts.ts). Defined once: the demo seed (db/seeds/demoAnalyses.ts)
 * creates its analyses with them, the runs tests compute their engine results with them
 * (src/features/runs/testSupport.ts), and the benchmarks run them.
 */
import type { Spec } from '@/engine/boundary/schemas';

/** Call-back: 30-day readmission on the 72-hour call-back by age band, adjusted for sex, comorbidity, prior admissions and site. */
export const CALL_BACK_DEMO_SPEC: Spec = {
  outcome: { column: 'readmitted_30d', type: 'binary' },
  exposure: { column: 'call_back', reference: '0' },
  modifier: { column: 'age_band', type: 'categorical', reference: '18-44' },
  covariates: [
    { column: 'sex', type: 'categorical', reference: 'F' },
    { column: 'comorbidity_score', type: 'continuous' },
    { column: 'prior_admissions', type: 'continuous' },
    { column: 'site', type: 'categorical', reference: 'Tern Valley General' },
  ],
  model: 'logistic',
  ci: { level: 0.95, method: 'delta' },
  effectMeasure: 'OR',
  alpha: 0.05,
  multiplicity: 'holm',
};

/** Up-and-about: length of stay on early mobility, with frailty as a continuous modifier, adjusted for age band and sex. */
export const UP_AND_ABOUT_DEMO_SPEC: Spec = {
  outcome: { column: 'length_of_stay_days', type: 'continuous' },
  exposure: { column: 'early_mobility', reference: '0' },
  // The effect is marked at the frailty scores clinicians name.
  modifier: { column: 'frailty_score', type: 'continuous', slopesAt: { kind: 'values', values: [3, 5, 7], names: ['mild', 'moderate', 'severe'] } },
  covariates: [
    { column: 'age_band', type: 'categorical', reference: '18-64' },
    { column: 'sex', type: 'categorical', reference: 'F' },
  ],
  model: 'linear',
  ci: { level: 0.95, method: 'delta' },
};
