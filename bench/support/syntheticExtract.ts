/**
 * The synthetic 12-column extract the ingest benchmarks use (seeded; no real patients):
 * binary outcome and intervention, age band, sex, site, counts, measurements and a ward.
 */
import { createWriteStream } from 'node:fs';
import { once } from 'node:events';
import { SeededRandom } from '@/features/extracts/seededRandom';

const SEED = 20260501;

export const SYNTHETIC_HEADER = 'readmitted_30d,call_back,age_band,sex,site,comorbidity_score,prior_admissions,frailty_score,length_of_stay_days,systolic_bp,creatinine,ward';
const AGE_BANDS = ['18-44', '45-64', '65-79', '80+'];
const SITES = ['TVG', 'ESH', 'RMH'];

/** Writes a seeded synthetic 12-column extract of `count` rows (about 45 bytes a row). */
export async function generateSyntheticExtract(path: string, count: number, options: { quoted?: boolean } = {}): Promise<void> {
  const quoted = options.quoted ?? false;
  const random = new SeededRandom(SEED);
  const out = createWriteStream(path, { highWaterMark: 1 << 20 });
  const text = (value: string): string => (quoted ? `"${value}"` : value);
  const eol = quoted ? '\r\n' : '\n';
  out.write(`${SYNTHETIC_HEADER}${eol}`);
  let batch: string[] = [];
  for (let i = 0; i < count; i++) {
    const band = random.pick([0.3, 0.3, 0.25, 0.15]);
    const callBack = random.bernoulli(0.5) ? 1 : 0;
    const readmitted = random.bernoulli(0.08 + 0.04 * band - 0.02 * callBack * band) ? 1 : 0;
    const frailty = Math.min(9, Math.max(1, 2 + band + random.normal())).toFixed(1);
    const los = Math.max(0.5, 3 + 2 * random.normal() + band).toFixed(1);
    const creatinine = Math.max(0.3, 1 + 0.3 * random.normal()).toFixed(2);
    const row = [
      readmitted,
      callBack,
      text(AGE_BANDS[band]),
      text(random.bernoulli(0.52) ? 'F' : 'M'),
      text(SITES[random.integerBelow(3)]),
      random.poisson(2 + band),
      random.poisson(0.6),
      frailty,
      los,
      Math.round(125 + 15 * random.normal()),
      creatinine,
      text(`Ward-${random.integerBelow(12) + 1}`),
    ];
    batch.push(row.join(','));
    if (batch.length === 10_000) {
      if (!out.write(`${batch.join(eol)}${eol}`)) await once(out, 'drain');
      batch = [];
    }
  }
  if (batch.length > 0) out.write(`${batch.join(eol)}${eol}`);
  out.end();
  await once(out, 'finish');
}

