/**
 * Demo cohorts of the fictional Tern Valley Health Partnership: SYNTHETIC data, made by a
 * seeded generator with known true effects. No row describes a real person; there are no
 * identifiers, dates or geographic codes, and the files pass Crossgrain's own identifier
 * screen. Sites are three invented hospitals: Tern Valley General, Eastholm Community and
 * Ridgemoor Infirmary.
 *
 * ## "Call-back within 72 hours" (12,000 discharges, seed 72)
 *
 * Columns: readmitted_30d (0/1), call_back (0/1), age_band (18-44, 45-64, 65-79, 80+),
 * sex (F/M), comorbidity_score (0-10), prior_admissions (0-6), site.
 *
 * True model, additive on the risk scale (a linear-probability model, so every effect below
 * is both the conditional and the marginal causal risk difference):
 *
 *   P(readmitted_30d = 1) = baseline[age_band] + 0.010 male + 0.012 comorbidity_score
 *                           + 0.020 prior_admissions + site effect + call_back * rd[age_band]
 *
 *   baseline      18-44 0.06   45-64 0.09   65-79 0.13   80+ 0.20
 *   rd (call)     18-44 -0.01  45-64 -0.02  65-79 -0.04  80+ -0.09
 *   site effect   Tern Valley General 0, Eastholm Community +0.010, Ridgemoor Infirmary -0.010
 *
 * The call helps most in the oldest band: the additive interaction contrast of 80+ against
 * 18-44 is -0.09 - (-0.01) = -0.08 (risk difference of differences). Every risk stays in
 * [0.04, 0.46]. The call is not randomised (as in QI data): P(call_back = 1) =
 * 0.30 + 0.05 band index + site uptake (0, +0.20, +0.05) + 0.02 comorbidity_score, so the
 * crude comparison is confounded by site, age band and comorbidity; adjusting for them
 * recovers the effects.
 *
 * ## "Up-and-about" (3,000 stays, seed 2024)
 *
 * Columns: length_of_stay_days (two decimals), early_mobility (0/1), frailty_score (1.0-9.0,
 * one decimal, clinical-frailty-like), age_band (18-64, 65-74, 75-84, 85+), sex,
 * admission_type (elective/emergency), comorbidity_score (0-10), site.
 *
 * True model, linear:
 *
 *   E[length_of_stay_days] = 2.0 + 0.6 frailty_score + 0.3 age band index + 0.1 male
 *                            + 0.8 emergency + 0.15 comorbidity_score + site effect
 *                            + early_mobility * (0.15 - 0.35 frailty_score)
 *
 *   site effect   Tern Valley General 0, Eastholm Community +0.3, Ridgemoor Infirmary -0.2
 *
 * so early mobility shortens the stay by 0.35 days more for each frailty point: its effect
 * is -0.20 days at frailty 1, -1.60 at 5 and -3.00 at 9 (product-term coefficient -0.35,
 * early_mobility main effect +0.15 at frailty 0). The error is normal with sigma 1 truncated
 * symmetrically at +-2 (mean 0, standard deviation 0.880), so every stay is positive;
 * rounding to 0.01 day adds at most 0.005. Early mobility is offered less to frailer
 * patients: P = 0.65 - 0.05 (frailty_score - 1) + site uptake (0, +0.10, -0.10).
 */
import { SeededRandom } from './seededRandom';

/** The three invented hospitals of the Tern Valley Health Partnership. */
export const DEMO_SITES = ['Tern Valley General', 'Eastholm Community', 'Ridgemoor Infirmary'] as const;

/** True parameters of the "Call-back within 72 hours" cohort (see the module comment). */
export const CALL_BACK_TRUTH = {
  initiative: 'Call-back within 72 hours',
  rows: 12_000,
  seed: 72,
  outcome: 'readmitted_30d',
  intervention: 'call_back',
  modifier: 'age_band',
  ageBands: ['18-44', '45-64', '65-79', '80+'] as const,
  /** Bands' shares of discharges. */
  ageBandShares: [0.22, 0.3, 0.28, 0.2] as const,
  baselineRisk: { '18-44': 0.06, '45-64': 0.09, '65-79': 0.13, '80+': 0.2 },
  /** Causal risk difference of call_back = 1 vs 0 within each band. */
  riskDifference: { '18-44': -0.01, '45-64': -0.02, '65-79': -0.04, '80+': -0.09 },
  /** rd[80+] - rd[18-44]: the additive interaction of the oldest band against the youngest. */
  additiveInteractionOldestVsYoungest: -0.08,
  covariateRiskDifferences: {
    male: 0.01,
    comorbidityScorePerPoint: 0.012,
    priorAdmissionPerAdmission: 0.02,
    site: { 'Tern Valley General': 0, 'Eastholm Community': 0.01, 'Ridgemoor Infirmary': -0.01 },
  },
} as const;

/** True parameters of the "Up-and-about" cohort (see the module comment). */
export const UP_AND_ABOUT_TRUTH = {
  initiative: 'Up-and-about',
  rows: 3_000,
  seed: 2024,
  outcome: 'length_of_stay_days',
  intervention: 'early_mobility',
  modifier: 'frailty_score',
  ageBands: ['18-64', '65-74', '75-84', '85+'] as const,
  intercept: 2.0,
  frailtyPerPoint: 0.6,
  ageBandPerStep: 0.3,
  male: 0.1,
  emergency: 0.8,
  comorbidityScorePerPoint: 0.15,
  site: { 'Tern Valley General': 0, 'Eastholm Community': 0.3, 'Ridgemoor Infirmary': -0.2 },
  /** Coefficient of early_mobility (its effect at frailty 0). */
  earlyMobilityMainEffect: 0.15,
  /** Coefficient of early_mobility x frailty_score: days per frailty point. */
  interactionPerFrailtyPoint: -0.35,
  /** Standard deviation of the truncated-normal error: sqrt(1 - 4 phi(2) / (2 Phi(2) - 1)). */
  errorStandardDeviation: 0.8796,
} as const;

/** Effect of early mobility on the expected length of stay (days) at a frailty score. */
export function earlyMobilityEffectAt(frailtyScore: number): number {
  return UP_AND_ABOUT_TRUTH.earlyMobilityMainEffect + UP_AND_ABOUT_TRUTH.interactionPerFrailtyPoint * frailtyScore;
}

/** Covariates of one Call-back discharge. */
export interface CallBackRow {
  callBack: 0 | 1;
  ageBand: (typeof CALL_BACK_TRUTH.ageBands)[number];
  sex: 'F' | 'M';
  comorbidityScore: number;
  priorAdmissions: number;
  site: (typeof DEMO_SITES)[number];
}

/** The true 30-day readmission risk of a Call-back discharge. */
export function callBackReadmissionRisk(row: CallBackRow): number {
  const t = CALL_BACK_TRUTH;
  const c = t.covariateRiskDifferences;
  return (
    t.baselineRisk[row.ageBand] +
    (row.sex === 'M' ? c.male : 0) +
    c.comorbidityScorePerPoint * row.comorbidityScore +
    c.priorAdmissionPerAdmission * row.priorAdmissions +
    c.site[row.site] +
    row.callBack * t.riskDifference[row.ageBand]
  );
}

/** Covariates of one Up-and-about stay. */
export interface UpAndAboutRow {
  earlyMobility: 0 | 1;
  frailtyScore: number;
  ageBand: (typeof UP_AND_ABOUT_TRUTH.ageBands)[number];
  sex: 'F' | 'M';
  emergency: boolean;
  comorbidityScore: number;
  site: (typeof DEMO_SITES)[number];
}

/** The true expected length of stay (days) of an Up-and-about stay. */
export function upAndAboutExpectedStay(row: UpAndAboutRow): number {
  const t = UP_AND_ABOUT_TRUTH;
  return (
    t.intercept +
    t.frailtyPerPoint * row.frailtyScore +
    t.ageBandPerStep * t.ageBands.indexOf(row.ageBand) +
    (row.sex === 'M' ? t.male : 0) +
    (row.emergency ? t.emergency : 0) +
    t.comorbidityScorePerPoint * row.comorbidityScore +
    t.site[row.site] +
    row.earlyMobility * earlyMobilityEffectAt(row.frailtyScore)
  );
}

/** A generated demo extract. */
export interface DemoCohort {
  initiative: string;
  /** Extract name as the product shows it. */
  name: string;
  /** Suggested upload file name. */
  fileName: string;
  description: string;
  seed: number;
  rows: number;
  /** The CSV text: a header and one line per row, LF line ends. */
  csv: string;
}

/** Options of the generators. */
export interface DemoCohortOptions {
  rows?: number;
  seed?: number;
}

const SYNTHETIC_NOTE = 'Synthetic demo data from a seeded generator with known true effects; no real patients.';

/** Generates the "Call-back within 72 hours" discharges (SYNTHETIC). */
export function generateCallBackCohort(options: DemoCohortOptions = {}): DemoCohort {
  const t = CALL_BACK_TRUTH;
  const rows = options.rows ?? t.rows;
  const seed = options.seed ?? t.seed;
  const random = new SeededRandom(seed);
  const siteUptake = [0, 0.2, 0.05];
  const lines = ['readmitted_30d,call_back,age_band,sex,comorbidity_score,prior_admissions,site'];
  for (let i = 0; i < rows; i++) {
    const band = random.pick(t.ageBandShares);
    const siteIndex = random.pick([0.45, 0.3, 0.25]);
    const sex = random.bernoulli(0.52) ? 'F' : 'M';
    const comorbidityScore = Math.min(10, random.poisson(0.8 + 0.9 * band));
    const priorAdmissions = Math.min(6, random.poisson(0.3 + 0.25 * band + 0.1 * comorbidityScore));
    const callProbability = 0.3 + 0.05 * band + siteUptake[siteIndex] + 0.02 * comorbidityScore;
    const callBack = random.bernoulli(callProbability) ? 1 : 0;
    const row: CallBackRow = { callBack, ageBand: t.ageBands[band], sex, comorbidityScore, priorAdmissions, site: DEMO_SITES[siteIndex] };
    const readmitted = random.bernoulli(callBackReadmissionRisk(row)) ? 1 : 0;
    lines.push(`${readmitted},${callBack},${row.ageBand},${sex},${comorbidityScore},${priorAdmissions},${row.site}`);
  }
  return {
    initiative: t.initiative,
    name: 'Discharges with call-back status (synthetic)',
    fileName: 'tern-valley-call-back-synthetic.csv',
    description: `${SYNTHETIC_NOTE} Nurse call-back within 72 hours of discharge and 30-day readmission.`,
    seed,
    rows,
    csv: `${lines.join('\n')}\n`,
  };
}

/** Standard normal truncated to [-2, 2] by rejection: symmetric, so its mean is exactly 0. */
function truncatedNormal(random: SeededRandom): number {
  for (;;) {
    const z = random.normal();
    if (z >= -2 && z <= 2) return z;
  }
}

/** Generates the "Up-and-about" stays (SYNTHETIC). */
export function generateUpAndAboutCohort(options: DemoCohortOptions = {}): DemoCohort {
  const t = UP_AND_ABOUT_TRUTH;
  const rows = options.rows ?? t.rows;
  const seed = options.seed ?? t.seed;
  const random = new SeededRandom(seed);
  const siteUptake = [0, 0.1, -0.1];
  const lines = ['length_of_stay_days,early_mobility,frailty_score,age_band,sex,admission_type,comorbidity_score,site'];
  for (let i = 0; i < rows; i++) {
    const band = random.pick([0.2, 0.3, 0.3, 0.2]);
    const siteIndex = random.pick([0.45, 0.3, 0.25]);
    const sex = random.bernoulli(0.55) ? 'F' : 'M';
    const emergency = random.bernoulli(0.7);
    const raw = 2 + 1.2 * band + 1.3 * random.normal();
    const frailtyScore = Math.round(Math.min(9, Math.max(1, raw)) * 10) / 10;
    const comorbidityScore = Math.min(10, random.poisson(1 + 0.6 * band));
    const mobilityProbability = 0.65 - 0.05 * (frailtyScore - 1) + siteUptake[siteIndex];
    const earlyMobility = random.bernoulli(mobilityProbability) ? 1 : 0;
    const row: UpAndAboutRow = {
      earlyMobility,
      frailtyScore,
      ageBand: t.ageBands[band],
      sex,
      emergency,
      comorbidityScore,
      site: DEMO_SITES[siteIndex],
    };
    const stay = upAndAboutExpectedStay(row) + truncatedNormal(random);
    lines.push(
      `${stay.toFixed(2)},${earlyMobility},${frailtyScore.toFixed(1)},${row.ageBand},${sex},${emergency ? 'emergency' : 'elective'},${comorbidityScore},${row.site}`,
    );
  }
  return {
    initiative: t.initiative,
    name: 'Stays with early-mobility status (synthetic)',
    fileName: 'tern-valley-up-and-about-synthetic.csv',
    description: `${SYNTHETIC_NOTE} Early mobility programme and length of stay in days.`,
    seed,
    rows,
    csv: `${lines.join('\n')}\n`,
  };
}

/** Both demo cohorts with their default sizes and seeds. */
export function generateDemoCohorts(): DemoCohort[] {
  return [generateCallBackCohort(), generateUpAndAboutCohort()];
}
