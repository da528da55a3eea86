-- Checkpoints of the audit chain's head. A checkpoint (position and hash of the newest
-- event at some moment) is exported and kept outside the database; checking the chain
-- against it later detects truncation, which the chain alone cannot: a chain whose newest
-- events were removed still links up perfectly.

-- The chain's head now. Positions and hashes only, never content, so any caller may ask.
CREATE OR REPLACE FUNCTION app_audit_chain_head()
  RETURNS TABLE (head_position bigint, head_hash text, head_at timestamptz)
  LANGUAGE sql STABLE SECURITY DEFINER SET search_path = public
  AS $$
    SELECT chain_position, hash, occurred_at FROM audit_events ORDER BY chain_position DESC LIMIT 1
  $$;
REVOKE ALL ON FUNCTION app_audit_chain_head() FROM PUBLIC;
GRANT EXECUTE ON FUNCTION app_audit_chain_head() TO {{app_role}};

-- The stored hash at one position (no row when the chain holds no event there).
CREATE OR REPLACE FUNCTION app_audit_chain_link(p_position bigint)
  RETURNS TABLE (link_hash text)
  LANGUAGE sql STABLE SECURITY DEFINER SET search_path = public
  AS $$
    SELECT hash FROM audit_events WHERE chain_position = p_position
  $$;
REVOKE ALL ON FUNCTION app_audit_chain_link(bigint) FROM PUBLIC;
GRANT EXECUTE ON FUNCTION app_audit_chain_link(bigint) TO {{app_role}};
