-- Row-level security for the initiatives' counters (migration add-initiative-stamps):
-- members of an initiative read its counter; nobody writes it but the triggers' SECURITY
-- DEFINER functions, which run as the owner (who bypasses row-level security).

ALTER TABLE initiative_stamps ENABLE ROW LEVEL SECURITY;
ALTER TABLE initiative_stamps FORCE ROW LEVEL SECURITY;
CREATE POLICY initiative_stamps_read ON initiative_stamps FOR SELECT
  USING (initiative_id IN (SELECT app_member_initiative_ids()));
GRANT SELECT ON initiative_stamps TO {{app_role}};
