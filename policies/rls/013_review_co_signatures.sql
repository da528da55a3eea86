-- A clinician's signature that does not yet complete the sign-offs an initiative requires
-- is a 'co-signed' step; clinicians record it as they record decisions, never on a run
-- they started themselves (as in 007_review.sql).

DROP POLICY IF EXISTS review_steps_decide ON review_steps;
CREATE POLICY review_steps_decide ON review_steps FOR INSERT
  WITH CHECK (
    kind IN ('co-signed', 'signed-off', 'sent-back') AND actor_id = app_current_user_id()
    AND initiative_id IN (SELECT app_clinician_initiative_ids())
    AND NOT EXISTS (SELECT 1 FROM runs r WHERE r.id = run_id AND r.started_by = app_current_user_id())
  );
