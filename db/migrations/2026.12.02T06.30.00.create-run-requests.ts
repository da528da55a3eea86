import type { Migration } from '../migrate';

/**
 * One run per click: `POST /api/analyses/{id}/runs` may carry an `Idempotency-Key`. Each
 * key is kept for one user and one analysis with the hash of the request body and the
 * run it started, so the same key within 24 hours answers with the same run instead of
 * queuing another. A table of its own (not a column on runs) because a key belongs to the
 * request, not to the run: it expires, and a later request may reuse it after 24 hours.
 * Policies in policies/rls/012_run_requests.sql.
 */
export const up: Migration = async ({ context }) => {
  await context.sql(`
    CREATE TABLE run_requests (
      user_id uuid NOT NULL REFERENCES users(id),
      analysis_id uuid NOT NULL REFERENCES analyses(id),
      idempotency_key text NOT NULL CHECK (length(idempotency_key) BETWEEN 1 AND 200),
      body_hash text NOT NULL,
      run_id uuid REFERENCES runs(id),
      created_at timestamptz NOT NULL DEFAULT now(),
      PRIMARY KEY (user_id, analysis_id, idempotency_key)
    );
  `);
  await context.applyPolicyFile('012_run_requests.sql');
};

export const down: Migration = async ({ context }) => {
  await context.sql('DROP TABLE IF EXISTS run_requests;');
};
