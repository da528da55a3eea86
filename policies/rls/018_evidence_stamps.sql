-- Row-level security for the evidence counters (migration add-evidence-stamps): members of
-- an initiative read its counter; nobody writes it but the triggers' SECURITY DEFINER
-- function, which runs as the owner (who bypasses row-level security).

ALTER TABLE evidence_stamps ENABLE ROW LEVEL SECURITY;
ALTER TABLE evidence_stamps FORCE ROW LEVEL SECURITY;
CREATE POLICY evidence_stamps_read ON evidence_stamps FOR SELECT
  USING (initiative_id IN (SELECT app_member_initiative_ids()));
GRANT SELECT ON evidence_stamps TO {{app_role}};
