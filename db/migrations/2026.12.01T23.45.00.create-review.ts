import type { Migration } from '../migrate';

/**
 * The review of runs: the steps of each run's review (an analyst submits it, a clinician
 * signs it off or sends it back, with a note) and the comments on it, threaded one level
 * (a reply names the comment it answers). Both are append-only; a run's review state is
 * its latest step. Policies in policies/rls/007_review.sql.
 */
export const up: Migration = async ({ context }) => {
  await context.sql(`
    CREATE TABLE review_steps (
      id bigint GENERATED ALWAYS AS IDENTITY PRIMARY KEY,
      run_id uuid NOT NULL REFERENCES runs(id),
      initiative_id uuid NOT NULL REFERENCES initiatives(id),
      kind text NOT NULL CHECK (kind IN ('submitted', 'signed-off', 'sent-back')),
      actor_id uuid NOT NULL REFERENCES users(id),
      note text NOT NULL DEFAULT '' CHECK (length(note) <= 4000),
      -- Sending back always says why.
      CHECK (kind <> 'sent-back' OR length(trim(note)) > 0),
      created_at timestamptz NOT NULL DEFAULT clock_timestamp()
    );
    -- A run's state is its latest step; the board reads the latest step of many runs.
    CREATE INDEX review_steps_run_idx ON review_steps (run_id, id DESC);
    CREATE INDEX review_steps_initiative_idx ON review_steps (initiative_id, id DESC);

    CREATE TABLE run_comments (
      id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
      run_id uuid NOT NULL REFERENCES runs(id),
      initiative_id uuid NOT NULL REFERENCES initiatives(id),
      parent_id uuid REFERENCES run_comments(id),
      author_id uuid NOT NULL REFERENCES users(id),
      body text NOT NULL CHECK (length(trim(body)) BETWEEN 1 AND 4000),
      created_at timestamptz NOT NULL DEFAULT clock_timestamp()
    );
    -- A run page lists its comments in order.
    CREATE INDEX run_comments_run_idx ON run_comments (run_id, created_at);
  `);
  await context.applyPolicyFile('007_review.sql');
};

export const down: Migration = async ({ context }) => {
  await context.sql(`
    DROP TABLE IF EXISTS run_comments;
    DROP TABLE IF EXISTS review_steps;
    DROP FUNCTION IF EXISTS app_clinician_initiative_ids();
  `);
};
