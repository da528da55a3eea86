import type { Migration } from '../migrate';

/**
 * Cohort extracts: the extract, its immutable versions, their columns stored column-wise
 * (one bytea per column, which loads straight into the engine's typed arrays), and the
 * intake records that track an upload while it is processed or after it was refused.
 */
export const up: Migration = async ({ context }) => {
  await context.sql(`
    CREATE TABLE extracts (
      id uuid PRIMARY KEY,
      initiative_id uuid NOT NULL REFERENCES initiatives(id),
      name text NOT NULL CHECK (length(name) BETWEEN 1 AND 120),
      created_by uuid NOT NULL REFERENCES users(id),
      created_at timestamptz NOT NULL DEFAULT now(),
      archived_at timestamptz,
      archived_by uuid REFERENCES users(id)
    );
    -- The extracts page lists an initiative's extracts.
    CREATE INDEX extracts_initiative_idx ON extracts (initiative_id, created_at DESC);

    CREATE TABLE extract_versions (
      id uuid PRIMARY KEY,
      extract_id uuid NOT NULL REFERENCES extracts(id),
      initiative_id uuid NOT NULL REFERENCES initiatives(id),
      version_number integer NOT NULL CHECK (version_number >= 1),
      status text NOT NULL CHECK (status IN ('needs-review', 'ready')),
      sha256 text NOT NULL CHECK (sha256 ~ '^[0-9a-f]{64}$'),
      byte_count bigint NOT NULL,
      row_count integer NOT NULL,
      column_count integer NOT NULL,
      delimiter text NOT NULL,
      uploaded_by uuid NOT NULL REFERENCES users(id),
      uploaded_at timestamptz NOT NULL DEFAULT now(),
      profile jsonb NOT NULL,
      findings jsonb NOT NULL DEFAULT '[]'::jsonb,
      dropped_columns text[] NOT NULL DEFAULT '{}',
      dictionary jsonb,
      attestation jsonb,
      confirmed_by uuid REFERENCES users(id),
      confirmed_at timestamptz,
      UNIQUE (extract_id, version_number)
    );

    CREATE TABLE extract_columns (
      version_id uuid NOT NULL REFERENCES extract_versions(id) ON DELETE CASCADE,
      initiative_id uuid NOT NULL REFERENCES initiatives(id),
      position integer NOT NULL,
      name text NOT NULL,
      storage text NOT NULL CHECK (storage IN ('numeric', 'text')),
      row_count integer NOT NULL,
      missing_count integer NOT NULL,
      values bytea NOT NULL,
      missing bytea NOT NULL,
      levels text[],
      PRIMARY KEY (version_id, position),
      UNIQUE (version_id, name)
    );
    -- Large column values live out of line; no compression, since doubles barely compress
    -- and decompressing would slow every analysis load.
    ALTER TABLE extract_columns ALTER COLUMN values SET STORAGE EXTERNAL;

    CREATE TABLE extract_intakes (
      id uuid PRIMARY KEY,
      extract_id uuid NOT NULL,
      initiative_id uuid NOT NULL REFERENCES initiatives(id),
      name text NOT NULL,
      new_extract boolean NOT NULL,
      uploaded_by uuid NOT NULL REFERENCES users(id),
      status text NOT NULL CHECK (status IN ('processing', 'refused', 'failed', 'stored')),
      stage text NOT NULL,
      percent real NOT NULL DEFAULT 0,
      byte_count bigint,
      reasons jsonb NOT NULL DEFAULT '[]'::jsonb,
      heartbeat_at timestamptz NOT NULL DEFAULT now(),
      created_at timestamptz NOT NULL DEFAULT now(),
      finished_at timestamptz
    );
    -- Status look-ups go by extract.
    CREATE INDEX extract_intakes_extract_idx ON extract_intakes (extract_id, created_at DESC);
  `);
  await context.applyPolicyFile('003_extracts.sql');
};

export const down: Migration = async ({ context }) => {
  await context.sql(`
    DROP TABLE IF EXISTS extract_intakes;
    DROP TABLE IF EXISTS extract_columns;
    DROP TABLE IF EXISTS extract_versions;
    DROP TABLE IF EXISTS extracts;
    DROP FUNCTION IF EXISTS extract_versions_freeze();
    DROP FUNCTION IF EXISTS app_analyst_initiative_ids();
  `);
};
