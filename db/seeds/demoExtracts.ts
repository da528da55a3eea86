/**
 * The demo extracts: the two synthetic cohorts of src/features/extracts/demoCohorts.ts,
 * uploaded and confirmed as the demo analyst through the same code an upload uses, so
 * the demo data live under the same row-level security as real extracts. Idempotent.
 */
import { randomUUID } from 'node:crypto';
import { QueryTypes } from 'sequelize';
import { generateDemoCohorts } from '@/features/extracts/demoCohorts';
import { readExtractColumns, reviewExtractColumns } from '@/features/extracts/extracts';
import { confirmVersion, storeVersion } from '@/features/extracts/extracts.server';
import { sequelize, withIdentity } from '@/lib/server/db';
import { env } from '@/lib/server/env';
import { DEMO_USERS, demoEmail } from './demo';

/** What each demo column holds, for the confirmed data dictionary. */
const DESCRIPTIONS: Record<string, string> = {
  readmitted_30d: 'Readmitted to any Tern Valley hospital within 30 days of discharge (1 = yes).',
  call_back: 'Received the nurse call-back within 72 hours of discharge (1 = yes).',
  age_band: 'Age at discharge, banded.',
  sex: 'Sex recorded at admission.',
  comorbidity_score: 'Comorbidity score at discharge (0 = none).',
  prior_admissions: 'Emergency admissions in the previous 12 months.',
  site: 'Discharging hospital (fictional).',
  length_of_stay_days: 'Length of stay in days, admission to discharge.',
  early_mobility: 'Mobilised on the ward from day one (1 = yes).',
  frailty_score: 'Frailty score at admission (1 = very fit to 9 = terminally ill).',
};

export async function seedDemoExtracts(): Promise<number> {
  const analyst = DEMO_USERS.find((u) => u.role === 'analyst');
  if (!analyst) return 0;
  const [user] = await sequelize.query<{ id: string; display_name: string }>(
    'SELECT id, display_name FROM users WHERE email = :email',
    { replacements: { email: demoEmail(analyst.local) }, type: QueryTypes.SELECT },
  );
  if (!user) return 0;
  let created = 0;
  for (const cohort of generateDemoCohorts()) {
    created += await withIdentity(user.id, async (transaction) => {
      const [initiative] = await sequelize.query<{ id: string }>('SELECT id FROM initiatives WHERE name = :name', {
        replacements: { name: cohort.initiative }, type: QueryTypes.SELECT, transaction,
      });
      if (!initiative) return 0;
      const existing = await sequelize.query('SELECT 1 FROM extracts WHERE initiative_id = :id AND name = :name', {
        replacements: { id: initiative.id, name: cohort.name }, type: QueryTypes.SELECT, transaction,
      });
      if (existing.length > 0) return 0;
      const start = { initiativeId: initiative.id, extractId: randomUUID(), versionId: randomUUID(), name: cohort.name, newExtract: true };
      await sequelize.query(
        `INSERT INTO extract_intakes (id, extract_id, initiative_id, name, new_extract, uploaded_by, status, stage)
         VALUES (:versionId, :extractId, :initiativeId, :name, true, :userId, 'processing', 'storing')`,
        { replacements: { ...start, userId: user.id }, transaction },
      );
      const read = await readExtractColumns([Buffer.from(cohort.csv)]);
      const review = reviewExtractColumns(read.columns, { regime: env.CROSSGRAIN_PRIVACY_REGIME });
      if (review.refused) throw new Error(`The demo cohort "${cohort.name}" failed our own identifier screen`);
      const uploader = { id: user.id, clientAddress: 'demo-seed' };
      await storeVersion(sequelize, transaction, uploader, start, read, review.profile, review.findings);
      await confirmVersion(transaction, { ...uploader, displayName: user.display_name }, start.extractId, start.versionId, {
        attestation: { signedName: user.display_name },
        columns: review.profile.map((p) => ({
          name: p.name,
          type: p.inferredType as 'binary' | 'categorical' | 'continuous' | 'count',
          description: DESCRIPTIONS[p.name] ?? '',
        })),
      });
      return 1;
    });
  }
  return created;
}
