import pg from 'pg';
import { Sequelize } from 'sequelize';
import { env } from '@/lib/server/env';
import { logger } from '@/lib/server/logger';

type Role = 'app' | 'owner';

/**
 * Opens a Sequelize instance as one of the two database roles. The application only ever
 * uses `app`; migrations and seeds of reference data run as `owner`.
 */
export function createSequelize(role: Role, options: { poolMax?: number } = {}): Sequelize {
  const username = role === 'app' ? env.CROSSGRAIN_DB_APP_USER : env.CROSSGRAIN_DB_OWNER_USER;
  const password = role === 'app' ? env.CROSSGRAIN_DB_APP_PASSWORD : env.CROSSGRAIN_DB_OWNER_PASSWORD;
  return new Sequelize(env.CROSSGRAIN_DB_NAME, username, password, {
    host: env.CROSSGRAIN_DB_HOST,
    port: env.CROSSGRAIN_DB_PORT,
    dialect: 'postgres',
    // Passing the driver explicitly lets the bundled server find it.
    dialectModule: pg,
    logging: (sql) => logger.trace({ sql: sql.slice(0, 200) }, 'sql'),
    pool: { max: options.poolMax ?? env.CROSSGRAIN_DB_POOL_MAX, min: 0, idle: 10_000, acquire: 30_000 },
    define: { underscored: true, timestamps: true },
    hooks: {
      // Sequelize already drops a client that errors while idle; this says so in the log.
      afterConnect: (connection) => {
        if (connection instanceof pg.Client) {
          connection.on('error', (error) => logger.error({ err: error, role }, 'database connection lost'));
        }
      },
    },
  });
}
