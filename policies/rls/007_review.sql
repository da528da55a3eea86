-- Row-level security for the review of runs. Every member of the initiative reads the
-- review history and the comments. Analysts record submissions; clinicians record
-- decisions, never on a run they started themselves; analysts and clinicians comment;
-- auditors only read. Both tables are append-only for the application: a decision or a
-- comment is never edited, a later one follows it.

CREATE OR REPLACE FUNCTION app_clinician_initiative_ids() RETURNS SETOF uuid
  LANGUAGE sql STABLE SECURITY DEFINER SET search_path = public
  AS $$
    SELECT m.initiative_id FROM memberships m JOIN users u ON u.id = m.user_id
    WHERE m.user_id = app_current_user_id() AND u.status = 'active' AND m.role = 'clinician'
  $$;
REVOKE ALL ON FUNCTION app_clinician_initiative_ids() FROM PUBLIC;
GRANT EXECUTE ON FUNCTION app_clinician_initiative_ids() TO {{app_role}};

ALTER TABLE review_steps ENABLE ROW LEVEL SECURITY;
ALTER TABLE review_steps FORCE ROW LEVEL SECURITY;
CREATE POLICY review_steps_read ON review_steps FOR SELECT
  USING (initiative_id IN (SELECT app_member_initiative_ids()));
CREATE POLICY review_steps_submit ON review_steps FOR INSERT
  WITH CHECK (
    kind = 'submitted' AND actor_id = app_current_user_id()
    AND initiative_id IN (SELECT app_analyst_initiative_ids())
  );
CREATE POLICY review_steps_decide ON review_steps FOR INSERT
  WITH CHECK (
    kind IN ('signed-off', 'sent-back') AND actor_id = app_current_user_id()
    AND initiative_id IN (SELECT app_clinician_initiative_ids())
    AND NOT EXISTS (SELECT 1 FROM runs r WHERE r.id = run_id AND r.started_by = app_current_user_id())
  );
GRANT SELECT, INSERT ON review_steps TO {{app_role}};

ALTER TABLE run_comments ENABLE ROW LEVEL SECURITY;
ALTER TABLE run_comments FORCE ROW LEVEL SECURITY;
CREATE POLICY run_comments_read ON run_comments FOR SELECT
  USING (initiative_id IN (SELECT app_member_initiative_ids()));
CREATE POLICY run_comments_write ON run_comments FOR INSERT
  WITH CHECK (
    author_id = app_current_user_id()
    AND (initiative_id IN (SELECT app_analyst_initiative_ids()) OR initiative_id IN (SELECT app_clinician_initiative_ids()))
  );
GRANT SELECT, INSERT ON run_comments TO {{app_role}};
