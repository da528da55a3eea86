import type { Migration } from '../migrate';

/**
 * An initiative's plan made before the data (issue 16 §3).
 * - `interaction_plans`: each saved sample-size plan (its inputs and closed-form figures),
 *   never changed; the newest is the initiative's plan, the older ones its history.
 * - `prespecified_modifiers`: the register of modifiers the initiative names before
 *   analysing them, with the predicted direction, time-stamped. An entry is never edited or
 *   deleted; it may be withdrawn once, with a reason. Analyses are matched against it.
 * Policies in policies/rls/016_plans.sql.
 */
export const up: Migration = async ({ context }) => {
  await context.sql(`
    CREATE TABLE interaction_plans (
      id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
      initiative_id uuid NOT NULL REFERENCES initiatives(id),
      inputs jsonb NOT NULL,
      figures jsonb NOT NULL,
      note text NOT NULL DEFAULT '' CHECK (length(note) <= 2000),
      saved_by uuid NOT NULL REFERENCES users(id),
      saved_at timestamptz NOT NULL DEFAULT clock_timestamp()
    );
    CREATE INDEX interaction_plans_initiative_idx ON interaction_plans (initiative_id, saved_at DESC);

    CREATE TABLE prespecified_modifiers (
      id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
      initiative_id uuid NOT NULL REFERENCES initiatives(id),
      modifier_column text NOT NULL CHECK (length(modifier_column) BETWEEN 1 AND 200),
      -- The outcome the prediction is about; empty for any outcome of the initiative.
      outcome_column text NOT NULL DEFAULT '' CHECK (length(outcome_column) <= 200),
      direction text NOT NULL CHECK (direction IN ('stronger', 'weaker', 'reversed', 'none')),
      -- Where the effect is predicted to be stronger or weaker: a level, or "higher values".
      where_text text NOT NULL DEFAULT '' CHECK (length(where_text) <= 200),
      rationale text NOT NULL CHECK (length(rationale) BETWEEN 1 AND 2000),
      registered_by uuid NOT NULL REFERENCES users(id),
      registered_at timestamptz NOT NULL DEFAULT clock_timestamp(),
      withdrawn_at timestamptz,
      withdrawn_by uuid REFERENCES users(id),
      withdrawal_reason text,
      CHECK ((withdrawn_at IS NULL) = (withdrawn_by IS NULL) AND (withdrawn_at IS NULL) = (withdrawal_reason IS NULL))
    );
    CREATE INDEX prespecified_modifiers_initiative_idx ON prespecified_modifiers (initiative_id, registered_at);

    -- An entry is a record: only the withdrawal may be filled in, once.
    CREATE FUNCTION prespecified_modifiers_keep() RETURNS trigger LANGUAGE plpgsql AS $$
    BEGIN
      IF OLD.withdrawn_at IS NOT NULL THEN
        RAISE EXCEPTION 'a withdrawn register entry cannot change' USING ERRCODE = 'check_violation';
      END IF;
      IF (NEW.id, NEW.initiative_id, NEW.modifier_column, NEW.outcome_column, NEW.direction, NEW.where_text, NEW.rationale, NEW.registered_by, NEW.registered_at)
         IS DISTINCT FROM (OLD.id, OLD.initiative_id, OLD.modifier_column, OLD.outcome_column, OLD.direction, OLD.where_text, OLD.rationale, OLD.registered_by, OLD.registered_at) THEN
        RAISE EXCEPTION 'a register entry cannot be edited, only withdrawn' USING ERRCODE = 'check_violation';
      END IF;
      RETURN NEW;
    END $$;
    CREATE TRIGGER prespecified_modifiers_keep BEFORE UPDATE ON prespecified_modifiers
      FOR EACH ROW EXECUTE FUNCTION prespecified_modifiers_keep();
    CREATE FUNCTION interaction_plans_keep() RETURNS trigger LANGUAGE plpgsql AS $$
    BEGIN
      RAISE EXCEPTION 'a saved plan cannot change; save a new one' USING ERRCODE = 'check_violation';
    END $$;
    CREATE TRIGGER interaction_plans_keep BEFORE UPDATE OR DELETE ON interaction_plans
      FOR EACH ROW EXECUTE FUNCTION interaction_plans_keep();
  `);
  await context.applyPolicyFile('016_plans.sql');
};

export const down: Migration = async ({ context }) => {
  await context.sql(`
    DROP TABLE IF EXISTS prespecified_modifiers;
    DROP TABLE IF EXISTS interaction_plans;
    DROP FUNCTION IF EXISTS prespecified_modifiers_keep();
    DROP FUNCTION IF EXISTS interaction_plans_keep();
  `);
};
