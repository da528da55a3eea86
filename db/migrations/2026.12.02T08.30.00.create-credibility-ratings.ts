import type { Migration } from '../migrate';

/**
 * The clinician's part of a run's credibility assessment (issue 16 §1): one row per run
 * with the rating of the clinical or biological rationale and of the agreement with prior
 * evidence, each with a note. The items the product computes from its own records are
 * never stored here: they are worked out when asked for. Each change is audited as
 * `credibility.rated` with the values before and after. Policies in
 * policies/rls/017_credibility.sql.
 */
export const up: Migration = async ({ context }) => {
  await context.sql(`
    CREATE TABLE credibility_ratings (
      run_id uuid PRIMARY KEY REFERENCES runs(id),
      initiative_id uuid NOT NULL REFERENCES initiatives(id),
      rationale text CHECK (rationale IN ('strong', 'plausible', 'weak', 'none')),
      rationale_note text NOT NULL DEFAULT '' CHECK (length(rationale_note) <= 2000),
      prior_evidence text CHECK (prior_evidence IN ('supports', 'none-known', 'mixed', 'contradicts')),
      prior_evidence_note text NOT NULL DEFAULT '' CHECK (length(prior_evidence_note) <= 2000),
      rated_by uuid NOT NULL REFERENCES users(id),
      rated_at timestamptz NOT NULL DEFAULT clock_timestamp()
    );
    CREATE INDEX credibility_ratings_initiative_idx ON credibility_ratings (initiative_id);
  `);
  await context.applyPolicyFile('017_credibility.sql');
};

export const down: Migration = async ({ context }) => {
  await context.sql('DROP TABLE IF EXISTS credibility_ratings;');
};
