-- Row-level security for the clinician's credibility ratings of a run: every member of the
-- initiative reads them; the initiative's clinicians record and change them, as
-- themselves, never on a run they started (the same rule as a review decision). Analysts
-- and auditors only read. Nothing is deleted: the audit trail keeps each earlier value.

ALTER TABLE credibility_ratings ENABLE ROW LEVEL SECURITY;
ALTER TABLE credibility_ratings FORCE ROW LEVEL SECURITY;
CREATE POLICY credibility_ratings_read ON credibility_ratings FOR SELECT
  USING (initiative_id IN (SELECT app_member_initiative_ids()));
CREATE POLICY credibility_ratings_insert ON credibility_ratings FOR INSERT
  WITH CHECK (
    rated_by = app_current_user_id()
    AND initiative_id IN (SELECT app_clinician_initiative_ids())
    AND EXISTS (SELECT 1 FROM runs r WHERE r.id = run_id AND r.initiative_id = credibility_ratings.initiative_id AND r.started_by <> app_current_user_id())
  );
CREATE POLICY credibility_ratings_update ON credibility_ratings FOR UPDATE
  USING (initiative_id IN (SELECT app_clinician_initiative_ids()))
  WITH CHECK (
    rated_by = app_current_user_id()
    AND initiative_id IN (SELECT app_clinician_initiative_ids())
    AND EXISTS (SELECT 1 FROM runs r WHERE r.id = run_id AND r.initiative_id = credibility_ratings.initiative_id AND r.started_by <> app_current_user_id())
  );
GRANT SELECT, INSERT ON credibility_ratings TO {{app_role}};
GRANT UPDATE (rationale, rationale_note, prior_evidence, prior_evidence_note, rated_by, rated_at) ON credibility_ratings TO {{app_role}};
