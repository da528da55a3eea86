-- Idempotency keys of run starts. Each person sees and writes only their own keys; a key
-- past its 24 hours may be taken over by a new request of the same person.

ALTER TABLE run_requests ENABLE ROW LEVEL SECURITY;
ALTER TABLE run_requests FORCE ROW LEVEL SECURITY;
CREATE POLICY run_requests_read ON run_requests FOR SELECT
  USING (user_id = app_current_user_id());
CREATE POLICY run_requests_insert ON run_requests FOR INSERT
  WITH CHECK (user_id = app_current_user_id());
CREATE POLICY run_requests_update ON run_requests FOR UPDATE
  USING (user_id = app_current_user_id())
  WITH CHECK (user_id = app_current_user_id());
GRANT SELECT, INSERT ON run_requests TO {{app_role}};
GRANT UPDATE (body_hash, run_id, created_at) ON run_requests TO {{app_role}};
