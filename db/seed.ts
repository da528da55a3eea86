import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { QueryTypes, type Sequelize } from 'sequelize';
import { env } from '@/lib/server/env';
import { hashPassword } from '@/lib/server/passwords';
import { createSequelize } from './connection';
import { sequelize as appSequelize } from '@/lib/server/db';
import { mailSettled } from '@/features/notifications/notificationMail.server';
import { seedDemoAnalyses } from './seeds/demoAnalyses';
import { seedDemoExtracts } from './seeds/demoExtracts';
import { DEMO_INITIATIVES, DEMO_ORGANISATION, DEMO_PASSWORD, DEMO_USERS, demoEmail } from './seeds/demo';

/**
 * Loads the demo organisation once. Idempotent: rows that exist are left alone, so a
 * second run (or a run after a crash) changes nothing. Runs as the owner role.
 */
export async function seedDemo(sequelize: Sequelize): Promise<{ created: boolean }> {
  if (env.CROSSGRAIN_ENV === 'production') {
    throw new Error('The demo seed never runs in production: its accounts have a published password.');
  }
  const [existing] = await sequelize.query<{ count: string }>(
    'SELECT count(*) FROM users WHERE is_demo', { type: QueryTypes.SELECT },
  );
  const passwordHash = await hashPassword(DEMO_PASSWORD);
  return sequelize.transaction(async (transaction) => {
    const initiativeIds: string[] = [];
    for (const initiative of DEMO_INITIATIVES) {
      const [row] = await sequelize.query<{ id: string }>(
        `INSERT INTO initiatives (name, slug, organisation, description)
         VALUES (:name, :slug, :organisation, :description)
         ON CONFLICT (slug) DO UPDATE SET slug = EXCLUDED.slug
         RETURNING id`,
        { replacements: { ...initiative, organisation: DEMO_ORGANISATION }, type: QueryTypes.SELECT, transaction },
      );
      initiativeIds.push(row.id);
    }
    for (const user of DEMO_USERS) {
      const [row] = await sequelize.query<{ id: string }>(
        `INSERT INTO users (email, display_name, password_hash, status, is_admin, is_demo)
         VALUES (:email, :displayName, :passwordHash, 'active', :isAdmin, true)
         ON CONFLICT (email) DO UPDATE SET email = EXCLUDED.email
         RETURNING id`,
        {
          replacements: { email: demoEmail(user.local), displayName: user.displayName, passwordHash, isAdmin: user.isAdmin },
          type: QueryTypes.SELECT,
          transaction,
        },
      );
      if (!user.role) continue;
      for (const initiativeId of initiativeIds) {
        await sequelize.query(
          `INSERT INTO memberships (initiative_id, user_id, role) VALUES (:initiativeId, :userId, :role)
           ON CONFLICT (initiative_id, user_id) DO NOTHING`,
          { replacements: { initiativeId, userId: row.id, role: user.role }, transaction },
        );
      }
    }
    return { created: Number(existing?.count ?? 0) === 0 };
  });
}

if (process.argv[1] && fileURLToPath(import.meta.url) === path.resolve(process.argv[1])) {
  const sequelize = createSequelize('owner', { poolMax: 2 });
  seedDemo(sequelize)
    .then(async ({ created }) => {
      const extracts = await seedDemoExtracts();
      const analyses = await seedDemoAnalyses();
      console.log(
        created || extracts || analyses
          ? `Demo data loaded (${extracts} synthetic extracts, ${analyses} demo analyses run).`
          : 'Demo data already present.',
      );
    })
    .catch((error: unknown) => {
      console.error(error instanceof Error ? error.message : error);
      process.exitCode = 1;
    })
    // Mails sent after the demo's commits (review notifications) are marked sent before the connections close.
    .finally(async () => {
      await mailSettled();
      await Promise.all([sequelize.close(), appSequelize.close()]);
    });
}
