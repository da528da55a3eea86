import type { Migration } from '../migrate';

/**
 * A decision on a review is an electronic signature: the signer re-enters their password
 * and states what the signature means, and the step is bound to the digest of the run's
 * result (SHA-256 of its canonical JSON, the same digest a verifying re-run compares).
 * Steps recorded before signatures existed keep null in both columns; every new decision
 * must carry them (the check is NOT VALID, so it holds for new rows without rewriting old
 * ones). The table's policies (policies/rls/007_review.sql) cover the new columns as they
 * stand: they are row policies, and the app role's grant is on the whole table.
 */
export const up: Migration = async ({ context }) => {
  await context.sql(`
    ALTER TABLE review_steps
      ADD COLUMN meaning text CHECK (meaning IS NULL OR length(trim(meaning)) BETWEEN 1 AND 200),
      ADD COLUMN result_digest text CHECK (result_digest IS NULL OR result_digest ~ '^[0-9a-f]{64}$');
    -- A decision says what it means and names the result it signs.
    ALTER TABLE review_steps ADD CONSTRAINT review_steps_decision_signed
      CHECK (kind = 'submitted' OR (meaning IS NOT NULL AND result_digest IS NOT NULL)) NOT VALID;
  `);
};

export const down: Migration = async ({ context }) => {
  await context.sql(`
    ALTER TABLE review_steps DROP CONSTRAINT IF EXISTS review_steps_decision_signed;
    ALTER TABLE review_steps DROP COLUMN IF EXISTS result_digest, DROP COLUMN IF EXISTS meaning;
  `);
};
