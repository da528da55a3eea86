-- Row-level security for extracts. Members of an initiative read its extracts' metadata;
-- only its analysts write. Row values (extract_columns) are readable by every member at
-- the database level; whether clinicians and auditors may preview rows is the
-- initiative's setting, checked in the application (policies/abilities.ts), and every
-- view of row-level data is an audit event.

CREATE OR REPLACE FUNCTION app_analyst_initiative_ids() RETURNS SETOF uuid
  LANGUAGE sql STABLE SECURITY DEFINER SET search_path = public
  AS $$
    SELECT m.initiative_id FROM memberships m JOIN users u ON u.id = m.user_id
    WHERE m.user_id = app_current_user_id() AND u.status = 'active' AND m.role = 'analyst'
  $$;
REVOKE ALL ON FUNCTION app_analyst_initiative_ids() FROM PUBLIC;
GRANT EXECUTE ON FUNCTION app_analyst_initiative_ids() TO {{app_role}};

-- A confirmed version is immutable: nothing about it changes after it becomes ready.
CREATE OR REPLACE FUNCTION extract_versions_freeze() RETURNS trigger
  LANGUAGE plpgsql
  AS $$ BEGIN
    IF OLD.status = 'ready' THEN
      RAISE EXCEPTION 'extract version % is confirmed and cannot change', OLD.id USING ERRCODE = '42501';
    END IF;
    RETURN NEW;
  END $$;
CREATE TRIGGER extract_versions_freeze BEFORE UPDATE ON extract_versions
  FOR EACH ROW EXECUTE FUNCTION extract_versions_freeze();

ALTER TABLE extracts ENABLE ROW LEVEL SECURITY;
ALTER TABLE extracts FORCE ROW LEVEL SECURITY;
CREATE POLICY extracts_read ON extracts FOR SELECT
  USING (initiative_id IN (SELECT app_member_initiative_ids()));
CREATE POLICY extracts_insert ON extracts FOR INSERT
  WITH CHECK (initiative_id IN (SELECT app_analyst_initiative_ids()) AND created_by = app_current_user_id());
CREATE POLICY extracts_update ON extracts FOR UPDATE
  USING (initiative_id IN (SELECT app_analyst_initiative_ids()))
  WITH CHECK (initiative_id IN (SELECT app_analyst_initiative_ids()));
-- Archiving is the only change; no deletion, so a version a run used is never lost.
GRANT SELECT, INSERT ON extracts TO {{app_role}};
GRANT UPDATE (archived_at, archived_by) ON extracts TO {{app_role}};

ALTER TABLE extract_versions ENABLE ROW LEVEL SECURITY;
ALTER TABLE extract_versions FORCE ROW LEVEL SECURITY;
CREATE POLICY extract_versions_read ON extract_versions FOR SELECT
  USING (initiative_id IN (SELECT app_member_initiative_ids()));
CREATE POLICY extract_versions_insert ON extract_versions FOR INSERT
  WITH CHECK (initiative_id IN (SELECT app_analyst_initiative_ids()) AND uploaded_by = app_current_user_id());
CREATE POLICY extract_versions_confirm ON extract_versions FOR UPDATE
  USING (initiative_id IN (SELECT app_analyst_initiative_ids()))
  WITH CHECK (initiative_id IN (SELECT app_analyst_initiative_ids()));
GRANT SELECT, INSERT ON extract_versions TO {{app_role}};
GRANT UPDATE (status, dictionary, attestation, confirmed_by, confirmed_at) ON extract_versions TO {{app_role}};

ALTER TABLE extract_columns ENABLE ROW LEVEL SECURITY;
ALTER TABLE extract_columns FORCE ROW LEVEL SECURITY;
CREATE POLICY extract_columns_read ON extract_columns FOR SELECT
  USING (initiative_id IN (SELECT app_member_initiative_ids()));
CREATE POLICY extract_columns_insert ON extract_columns FOR INSERT
  WITH CHECK (initiative_id IN (SELECT app_analyst_initiative_ids()));
GRANT SELECT, INSERT ON extract_columns TO {{app_role}};

ALTER TABLE extract_intakes ENABLE ROW LEVEL SECURITY;
ALTER TABLE extract_intakes FORCE ROW LEVEL SECURITY;
CREATE POLICY extract_intakes_read ON extract_intakes FOR SELECT
  USING (initiative_id IN (SELECT app_member_initiative_ids()));
CREATE POLICY extract_intakes_insert ON extract_intakes FOR INSERT
  WITH CHECK (initiative_id IN (SELECT app_analyst_initiative_ids()) AND uploaded_by = app_current_user_id());
CREATE POLICY extract_intakes_update ON extract_intakes FOR UPDATE
  USING (initiative_id IN (SELECT app_analyst_initiative_ids()))
  WITH CHECK (initiative_id IN (SELECT app_analyst_initiative_ids()));
GRANT SELECT, INSERT ON extract_intakes TO {{app_role}};
GRANT UPDATE (status, stage, percent, byte_count, reasons, heartbeat_at, finished_at) ON extract_intakes TO {{app_role}};
