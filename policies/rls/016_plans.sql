-- Row-level security for an initiative's plan: every member reads its saved plans and its
-- register of prespecified modifiers; its analysts save plans (as themselves) and register
-- or withdraw entries. Triggers (migration create-plans) keep saved plans unchanged and
-- allow an entry only its withdrawal.

ALTER TABLE interaction_plans ENABLE ROW LEVEL SECURITY;
ALTER TABLE interaction_plans FORCE ROW LEVEL SECURITY;
CREATE POLICY interaction_plans_read ON interaction_plans FOR SELECT
  USING (initiative_id IN (SELECT app_member_initiative_ids()));
CREATE POLICY interaction_plans_insert ON interaction_plans FOR INSERT
  WITH CHECK (initiative_id IN (SELECT app_analyst_initiative_ids()) AND saved_by = app_current_user_id());
GRANT SELECT, INSERT ON interaction_plans TO {{app_role}};

ALTER TABLE prespecified_modifiers ENABLE ROW LEVEL SECURITY;
ALTER TABLE prespecified_modifiers FORCE ROW LEVEL SECURITY;
CREATE POLICY prespecified_modifiers_read ON prespecified_modifiers FOR SELECT
  USING (initiative_id IN (SELECT app_member_initiative_ids()));
CREATE POLICY prespecified_modifiers_insert ON prespecified_modifiers FOR INSERT
  WITH CHECK (initiative_id IN (SELECT app_analyst_initiative_ids()) AND registered_by = app_current_user_id());
CREATE POLICY prespecified_modifiers_withdraw ON prespecified_modifiers FOR UPDATE
  USING (initiative_id IN (SELECT app_analyst_initiative_ids()))
  WITH CHECK (initiative_id IN (SELECT app_analyst_initiative_ids()) AND withdrawn_by = app_current_user_id());
GRANT SELECT, INSERT ON prespecified_modifiers TO {{app_role}};
GRANT UPDATE (withdrawn_at, withdrawn_by, withdrawal_reason) ON prespecified_modifiers TO {{app_role}};
