import PgBoss from 'pg-boss';
import { env } from '@/lib/server/env';
import type { Migration } from '../migrate';

// Frozen as this migration created them: a migration never follows live constants.
const QUEUE_SCHEMA = 'pgboss';
const RUN_QUEUE = 'analysis-run';

/**
 * Analyses (a question and its specification, pinned to one extract version), runs (one
 * execution of the engine, with the full result), and the PostgreSQL-backed job queue
 * (pg-boss) that carries runs to the workers. The queue's schema and tables are created
 * here, as the owner, so that the application role still owns nothing.
 */
export const up: Migration = async ({ context }) => {
  await context.sql(`
    CREATE TABLE analyses (
      id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
      initiative_id uuid NOT NULL REFERENCES initiatives(id),
      extract_version_id uuid NOT NULL REFERENCES extract_versions(id),
      title text NOT NULL CHECK (length(title) BETWEEN 3 AND 200),
      question text NOT NULL CHECK (length(question) BETWEEN 10 AND 4000),
      prespecified boolean NOT NULL,
      prespecified_at timestamptz,
      spec jsonb NOT NULL,
      created_by uuid NOT NULL REFERENCES users(id),
      created_at timestamptz NOT NULL DEFAULT now(),
      updated_by uuid NOT NULL REFERENCES users(id),
      updated_at timestamptz NOT NULL DEFAULT now(),
      CHECK (prespecified = (prespecified_at IS NOT NULL))
    );
    -- The analyses page lists an initiative's analyses, newest first.
    CREATE INDEX analyses_initiative_idx ON analyses (initiative_id, updated_at DESC);

    CREATE TABLE runs (
      id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
      analysis_id uuid NOT NULL REFERENCES analyses(id),
      initiative_id uuid NOT NULL REFERENCES initiatives(id),
      extract_version_id uuid NOT NULL REFERENCES extract_versions(id),
      status text NOT NULL CHECK (status IN ('queued', 'running', 'succeeded', 'failed', 'cancelled')),
      progress jsonb NOT NULL DEFAULT '{"stage": "queued", "fraction": 0}'::jsonb,
      spec jsonb NOT NULL,
      spec_hash text NOT NULL,
      extract_sha256 text NOT NULL,
      engine_version text,
      seed bigint,
      exploratory boolean NOT NULL,
      caution_text text NOT NULL,
      caution_version text NOT NULL,
      result jsonb,
      error jsonb,
      started_by uuid NOT NULL REFERENCES users(id),
      queued_at timestamptz NOT NULL DEFAULT now(),
      started_at timestamptz,
      finished_at timestamptz,
      heartbeat_at timestamptz,
      worker text,
      cancel_requested boolean NOT NULL DEFAULT false,
      CHECK ((status = 'succeeded') = (result IS NOT NULL))
    );
    -- An analysis lists its runs; the stale-run sweep looks for running runs by heartbeat.
    CREATE INDEX runs_analysis_idx ON runs (analysis_id, queued_at DESC);
    CREATE INDEX runs_running_idx ON runs (heartbeat_at) WHERE status = 'running';
  `);
  await context.applyPolicyFile('004_analyses_and_runs.sql');

  const boss = new PgBoss({
    host: env.CROSSGRAIN_DB_HOST, port: env.CROSSGRAIN_DB_PORT, database: env.CROSSGRAIN_DB_NAME,
    user: env.CROSSGRAIN_DB_OWNER_USER, password: env.CROSSGRAIN_DB_OWNER_PASSWORD,
    schema: QUEUE_SCHEMA, supervise: false, schedule: false, max: 2,
  });
  await boss.start();
  // A retry would re-run the same run record; a retry in Crossgrain is a new run instead.
  await boss.createQueue(RUN_QUEUE, { name: RUN_QUEUE, retryLimit: 0, expireInSeconds: 3600 });
  await boss.stop({ graceful: false, wait: true });
  await context.sql(`
    GRANT USAGE ON SCHEMA ${QUEUE_SCHEMA} TO {{app_role}};
    GRANT SELECT, INSERT, UPDATE, DELETE ON ALL TABLES IN SCHEMA ${QUEUE_SCHEMA} TO {{app_role}};
    GRANT USAGE, SELECT ON ALL SEQUENCES IN SCHEMA ${QUEUE_SCHEMA} TO {{app_role}};
    GRANT EXECUTE ON ALL FUNCTIONS IN SCHEMA ${QUEUE_SCHEMA} TO {{app_role}};
  `);
};

export const down: Migration = async ({ context }) => {
  await context.sql(`
    DROP SCHEMA IF EXISTS ${QUEUE_SCHEMA} CASCADE;
    DROP FUNCTION IF EXISTS app_fail_stale_runs(integer);
    DROP TABLE IF EXISTS runs;
    DROP TABLE IF EXISTS analyses;
  `);
};
