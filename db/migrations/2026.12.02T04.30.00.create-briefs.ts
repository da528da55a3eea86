import type { Migration } from '../migrate';

/**
 * Briefs: an analyst drafts a brief from a signed-off run and publishes it as numbered,
 * immutable versions (content, rendered HTML and PDF, and the SHA-256 of the PDF). A
 * correction is a new version with a note saying what changed; a retraction marks the
 * brief and every version with a reason, keeping the record. Each initiative has its
 * brief settings (small-cell threshold, paper size) and a distribution list; every
 * e-mail sent is one delivery row. Policies in policies/rls/009_briefs.sql.
 */
export const up: Migration = async ({ context }) => {
  await context.sql(`
    CREATE TABLE brief_settings (
      initiative_id uuid PRIMARY KEY REFERENCES initiatives(id),
      cell_threshold integer NOT NULL DEFAULT 11 CHECK (cell_threshold BETWEEN 2 AND 100),
      page_size text NOT NULL DEFAULT 'A4' CHECK (page_size IN ('A4', 'LETTER')),
      updated_by uuid REFERENCES users(id),
      updated_at timestamptz NOT NULL DEFAULT now()
    );

    CREATE TABLE brief_recipients (
      id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
      initiative_id uuid NOT NULL REFERENCES initiatives(id),
      name text NOT NULL CHECK (length(trim(name)) BETWEEN 1 AND 200),
      email text NOT NULL CHECK (length(email) BETWEEN 3 AND 320),
      created_by uuid NOT NULL REFERENCES users(id),
      created_at timestamptz NOT NULL DEFAULT now(),
      UNIQUE (initiative_id, email)
    );

    CREATE TABLE briefs (
      id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
      initiative_id uuid NOT NULL REFERENCES initiatives(id),
      run_id uuid NOT NULL REFERENCES runs(id),
      analysis_id uuid NOT NULL REFERENCES analyses(id),
      title text NOT NULL CHECK (length(trim(title)) BETWEEN 1 AND 200),
      summary text NOT NULL CHECK (length(summary) <= 4000),
      plot text NOT NULL DEFAULT 'forest' CHECK (plot IN ('forest', 'modifier', 'none')),
      own_cautions jsonb NOT NULL DEFAULT '[]'::jsonb,
      state text NOT NULL DEFAULT 'draft' CHECK (state IN ('draft', 'published', 'retracted')),
      created_by uuid NOT NULL REFERENCES users(id),
      updated_by uuid NOT NULL REFERENCES users(id),
      created_at timestamptz NOT NULL DEFAULT now(),
      updated_at timestamptz NOT NULL DEFAULT now(),
      retracted_at timestamptz,
      retracted_by uuid REFERENCES users(id),
      retraction_reason text,
      CHECK (state <> 'retracted' OR (retracted_at IS NOT NULL AND length(trim(coalesce(retraction_reason, ''))) > 0))
    );
    -- The Briefs tab lists an initiative's briefs; a run's page lists its briefs.
    CREATE INDEX briefs_initiative_idx ON briefs (initiative_id, updated_at DESC);
    CREATE INDEX briefs_run_idx ON briefs (run_id);

    CREATE TABLE brief_versions (
      id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
      brief_id uuid NOT NULL REFERENCES briefs(id),
      initiative_id uuid NOT NULL REFERENCES initiatives(id),
      version integer NOT NULL CHECK (version >= 1),
      content jsonb NOT NULL,
      html text NOT NULL,
      pdf bytea NOT NULL,
      sha256 text NOT NULL CHECK (sha256 ~ '^[0-9a-f]{64}$'),
      page_size text NOT NULL,
      -- A correction always says what changed.
      change_note text NOT NULL DEFAULT '' CHECK (version = 1 OR length(trim(change_note)) > 0),
      published_by uuid NOT NULL REFERENCES users(id),
      published_at timestamptz NOT NULL DEFAULT clock_timestamp(),
      -- Set when the brief is retracted: the same document marked as retracted. The
      -- published PDF and its hash stay as they were.
      retracted_pdf bytea,
      UNIQUE (brief_id, version)
    );

    -- A published version never changes; only the retraction copy may be added once.
    CREATE FUNCTION brief_versions_frozen() RETURNS trigger LANGUAGE plpgsql AS $$
    BEGIN
      IF NEW.content IS DISTINCT FROM OLD.content OR NEW.html IS DISTINCT FROM OLD.html OR NEW.pdf IS DISTINCT FROM OLD.pdf
         OR NEW.sha256 IS DISTINCT FROM OLD.sha256 OR NEW.version IS DISTINCT FROM OLD.version OR NEW.brief_id IS DISTINCT FROM OLD.brief_id
         OR OLD.retracted_pdf IS NOT NULL THEN
        RAISE EXCEPTION 'A published brief version cannot be changed' USING ERRCODE = 'P0001';
      END IF;
      RETURN NEW;
    END $$;
    CREATE TRIGGER brief_versions_frozen BEFORE UPDATE ON brief_versions FOR EACH ROW EXECUTE FUNCTION brief_versions_frozen();

    CREATE TABLE brief_deliveries (
      id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
      send_id uuid NOT NULL,
      brief_id uuid NOT NULL REFERENCES briefs(id),
      initiative_id uuid NOT NULL REFERENCES initiatives(id),
      version integer NOT NULL,
      recipient_email text NOT NULL,
      recipient_name text NOT NULL DEFAULT '',
      status text NOT NULL CHECK (status IN ('sent', 'failed')),
      message_id text,
      sent_by uuid NOT NULL REFERENCES users(id),
      sent_at timestamptz NOT NULL DEFAULT clock_timestamp()
    );
    -- A brief page lists its sends.
    CREATE INDEX brief_deliveries_brief_idx ON brief_deliveries (brief_id, sent_at DESC);
  `);
  await context.applyPolicyFile('009_briefs.sql');
};

export const down: Migration = async ({ context }) => {
  await context.sql(`
    DROP TABLE IF EXISTS brief_deliveries;
    DROP TABLE IF EXISTS brief_versions;
    DROP FUNCTION IF EXISTS brief_versions_frozen();
    DROP TABLE IF EXISTS briefs;
    DROP TABLE IF EXISTS brief_recipients;
    DROP TABLE IF EXISTS brief_settings;
  `);
};
