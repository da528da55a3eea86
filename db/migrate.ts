import { readFileSync } from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import type { QueryInterface, Sequelize } from 'sequelize';
import { SequelizeStorage, Umzug } from 'umzug';
import { env } from '@/lib/server/env';
import { createSequelize } from './connection';

const here = path.dirname(fileURLToPath(import.meta.url));

/** What every migration receives: the owner connection and the name of the app role. */
export interface MigrationContext {
  sequelize: Sequelize;
  queryInterface: QueryInterface;
  appRole: string;
  /** Runs a file of policies/rls as one multi-statement script, with {{app_role}} filled in. */
  applyPolicyFile: (name: string) => Promise<void>;
  sql: (text: string) => Promise<void>;
}

export type Migration = (params: { context: MigrationContext }) => Promise<void>;

/** Builds the migrator. Migrations always run as the owner role. */
export function createMigrator(sequelize: Sequelize = createSequelize('owner', { poolMax: 2 })) {
  const appRole = env.CROSSGRAIN_DB_APP_USER;
  const sql = async (text: string) => {
    await sequelize.query(text.replaceAll('{{app_role}}', appRole));
  };
  const context: MigrationContext = {
    sequelize,
    queryInterface: sequelize.getQueryInterface(),
    appRole,
    sql,
    applyPolicyFile: async (name) => {
      await sql(readFileSync(path.join(here, '..', 'policies', 'rls', name), 'utf8'));
    },
  };
  return new Umzug<MigrationContext>({
    migrations: { glob: ['migrations/*.ts', { cwd: here }] },
    context,
    storage: new SequelizeStorage({ sequelize, tableName: 'schema_migrations' }),
    logger: undefined,
  });
}

/** Applies every pending migration; returns their names. */
export async function migrateUp(): Promise<string[]> {
  const sequelize = createSequelize('owner', { poolMax: 2 });
  try {
    const done = await createMigrator(sequelize).up();
    return done.map((m) => m.name);
  } finally {
    await sequelize.close();
  }
}

if (process.argv[1] && fileURLToPath(import.meta.url) === path.resolve(process.argv[1])) {
  const direction = process.argv[2] ?? 'up';
  const sequelize = createSequelize('owner', { poolMax: 2 });
  const migrator = createMigrator(sequelize);
  const run = direction === 'down' ? migrator.down() : migrator.up();
  run
    .then((done) => {
      const names = done.map((m) => m.name);
      console.log(names.length ? `${direction}: ${names.join(', ')}` : 'Database schema is current.');
    })
    .catch((error: unknown) => {
      console.error(error instanceof Error ? error.message : error);
      process.exitCode = 1;
    })
    .finally(() => sequelize.close());
}
