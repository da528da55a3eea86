-- Row-level security for briefs. Every member of the initiative reads its briefs, their
-- versions, settings, distribution list and deliveries; only its analysts write them.
-- Published versions are append-only (a trigger refuses any change to a snapshot; the
-- retraction copy is the one column an update may fill, once).

ALTER TABLE brief_settings ENABLE ROW LEVEL SECURITY;
ALTER TABLE brief_settings FORCE ROW LEVEL SECURITY;
CREATE POLICY brief_settings_read ON brief_settings FOR SELECT
  USING (initiative_id IN (SELECT app_member_initiative_ids()));
CREATE POLICY brief_settings_insert ON brief_settings FOR INSERT
  WITH CHECK (initiative_id IN (SELECT app_analyst_initiative_ids()));
CREATE POLICY brief_settings_update ON brief_settings FOR UPDATE
  USING (initiative_id IN (SELECT app_analyst_initiative_ids()))
  WITH CHECK (initiative_id IN (SELECT app_analyst_initiative_ids()));
GRANT SELECT, INSERT ON brief_settings TO {{app_role}};
GRANT UPDATE (cell_threshold, page_size, updated_by, updated_at) ON brief_settings TO {{app_role}};

ALTER TABLE brief_recipients ENABLE ROW LEVEL SECURITY;
ALTER TABLE brief_recipients FORCE ROW LEVEL SECURITY;
CREATE POLICY brief_recipients_read ON brief_recipients FOR SELECT
  USING (initiative_id IN (SELECT app_member_initiative_ids()));
CREATE POLICY brief_recipients_insert ON brief_recipients FOR INSERT
  WITH CHECK (initiative_id IN (SELECT app_analyst_initiative_ids()) AND created_by = app_current_user_id());
CREATE POLICY brief_recipients_delete ON brief_recipients FOR DELETE
  USING (initiative_id IN (SELECT app_analyst_initiative_ids()));
GRANT SELECT, INSERT, DELETE ON brief_recipients TO {{app_role}};

ALTER TABLE briefs ENABLE ROW LEVEL SECURITY;
ALTER TABLE briefs FORCE ROW LEVEL SECURITY;
CREATE POLICY briefs_read ON briefs FOR SELECT
  USING (initiative_id IN (SELECT app_member_initiative_ids()));
CREATE POLICY briefs_insert ON briefs FOR INSERT
  WITH CHECK (initiative_id IN (SELECT app_analyst_initiative_ids()) AND created_by = app_current_user_id());
CREATE POLICY briefs_update ON briefs FOR UPDATE
  USING (initiative_id IN (SELECT app_analyst_initiative_ids()))
  WITH CHECK (initiative_id IN (SELECT app_analyst_initiative_ids()) AND updated_by = app_current_user_id());
GRANT SELECT, INSERT ON briefs TO {{app_role}};
GRANT UPDATE (title, summary, plot, own_cautions, state, updated_by, updated_at, retracted_at, retracted_by, retraction_reason)
  ON briefs TO {{app_role}};

ALTER TABLE brief_versions ENABLE ROW LEVEL SECURITY;
ALTER TABLE brief_versions FORCE ROW LEVEL SECURITY;
CREATE POLICY brief_versions_read ON brief_versions FOR SELECT
  USING (initiative_id IN (SELECT app_member_initiative_ids()));
CREATE POLICY brief_versions_insert ON brief_versions FOR INSERT
  WITH CHECK (initiative_id IN (SELECT app_analyst_initiative_ids()) AND published_by = app_current_user_id());
CREATE POLICY brief_versions_retract ON brief_versions FOR UPDATE
  USING (initiative_id IN (SELECT app_analyst_initiative_ids()))
  WITH CHECK (initiative_id IN (SELECT app_analyst_initiative_ids()));
GRANT SELECT, INSERT ON brief_versions TO {{app_role}};
GRANT UPDATE (retracted_pdf) ON brief_versions TO {{app_role}};

ALTER TABLE brief_deliveries ENABLE ROW LEVEL SECURITY;
ALTER TABLE brief_deliveries FORCE ROW LEVEL SECURITY;
CREATE POLICY brief_deliveries_read ON brief_deliveries FOR SELECT
  USING (initiative_id IN (SELECT app_member_initiative_ids()));
CREATE POLICY brief_deliveries_insert ON brief_deliveries FOR INSERT
  WITH CHECK (initiative_id IN (SELECT app_analyst_initiative_ids()) AND sent_by = app_current_user_id());
GRANT SELECT, INSERT ON brief_deliveries TO {{app_role}};
