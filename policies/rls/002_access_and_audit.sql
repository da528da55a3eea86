-- Grants for sign-in support, and the audit trail's append-only, hash-chained table.

-- Tokens and attempts hold no initiative data and are used before an identity exists.
GRANT SELECT, INSERT, UPDATE ON auth_tokens TO {{app_role}};
GRANT SELECT, INSERT, DELETE ON signin_attempts TO {{app_role}};
GRANT SELECT, INSERT, UPDATE ON api_tokens TO {{app_role}};

-- The initiatives in which the caller is an active auditor.
CREATE OR REPLACE FUNCTION app_auditor_initiative_ids() RETURNS SETOF uuid
  LANGUAGE sql STABLE SECURITY DEFINER SET search_path = public
  AS $$
    SELECT m.initiative_id FROM memberships m JOIN users u ON u.id = m.user_id
    WHERE m.user_id = app_current_user_id() AND u.status = 'active' AND m.role = 'auditor'
  $$;
REVOKE ALL ON FUNCTION app_auditor_initiative_ids() FROM PUBLIC;
GRANT EXECUTE ON FUNCTION app_auditor_initiative_ids() TO {{app_role}};

-- The canonical serialisation of one event: PostgreSQL's jsonb text of an array of its
-- fields in a fixed order (jsonb text is deterministic and escapes every string, so no
-- field can bleed into the next). Timestamps are UTC with microseconds.
CREATE OR REPLACE FUNCTION app_audit_canonical(e audit_events) RETURNS text
  LANGUAGE sql IMMUTABLE
  AS $$
    SELECT jsonb_build_array(
      e.chain_position,
      to_char(e.occurred_at AT TIME ZONE 'UTC', 'YYYY-MM-DD"T"HH24:MI:SS.US"Z"'),
      e.actor_id, e.actor_role, e.action, e.subject_type, e.subject_id, e.initiative_id,
      e.client_address, e.details, e.prev_hash
    )::text
  $$;

-- Links each new event into the chain. Runs as the owner (SECURITY DEFINER) so that it
-- sees the chain head whatever the caller's row-level security allows. The advisory lock
-- serialises appends until the inserting transaction ends, so concurrent writers can
-- never fork the chain; chain_position (not the identity column, whose values are
-- handed out before the lock) gives the chain's order.
CREATE OR REPLACE FUNCTION audit_events_link() RETURNS trigger
  LANGUAGE plpgsql SECURITY DEFINER SET search_path = public
  AS $$
  DECLARE
    head record;
  BEGIN
    PERFORM pg_advisory_xact_lock(hashtext('crossgrain.audit_events'));
    SELECT chain_position, hash INTO head FROM audit_events ORDER BY chain_position DESC LIMIT 1;
    NEW.chain_position := coalesce(head.chain_position, 0) + 1;
    NEW.prev_hash := coalesce(head.hash, repeat('0', 64));
    NEW.occurred_at := clock_timestamp();
    IF NEW.initiative_id IS NOT NULL AND NEW.actor_id IS NOT NULL THEN
      NEW.actor_role := (SELECT role FROM memberships WHERE user_id = NEW.actor_id AND initiative_id = NEW.initiative_id);
    END IF;
    IF NEW.actor_role IS NULL AND NEW.actor_id IS NOT NULL THEN
      NEW.actor_role := CASE WHEN (SELECT is_admin FROM users WHERE id = NEW.actor_id) THEN 'admin' ELSE NULL END;
    END IF;
    NEW.hash := encode(sha256(convert_to(app_audit_canonical(NEW), 'UTF8')), 'hex');
    RETURN NEW;
  END $$;
CREATE TRIGGER audit_events_link BEFORE INSERT ON audit_events
  FOR EACH ROW EXECUTE FUNCTION audit_events_link();

-- Belt and braces beside the missing grants: no role changes or removes an event
-- through ordinary statements, the owner included.
CREATE OR REPLACE FUNCTION audit_events_refuse_change() RETURNS trigger
  LANGUAGE plpgsql
  AS $$ BEGIN RAISE EXCEPTION 'audit events are append-only' USING ERRCODE = '42501'; END $$;
CREATE TRIGGER audit_events_no_change BEFORE UPDATE OR DELETE ON audit_events
  FOR EACH ROW EXECUTE FUNCTION audit_events_refuse_change();
CREATE TRIGGER audit_events_no_truncate BEFORE TRUNCATE ON audit_events
  FOR EACH STATEMENT EXECUTE FUNCTION audit_events_refuse_change();

-- Walks the whole chain and reports the first broken link: a row whose prev_hash is not
-- its predecessor's hash, whose position skips, or whose hash does not match its content.
-- Returns positions only, never content, so any signed-in caller may run it.
CREATE OR REPLACE FUNCTION app_verify_audit_chain()
  RETURNS TABLE (checked bigint, head_position bigint, head_hash text, broken_position bigint, broken_id bigint, reason text)
  LANGUAGE plpgsql STABLE SECURITY DEFINER SET search_path = public
  AS $$
  DECLARE
    e audit_events;
    expected_prev text := repeat('0', 64);
    expected_position bigint := 1;
  BEGIN
    checked := 0;
    FOR e IN SELECT * FROM audit_events ORDER BY chain_position LOOP
      IF e.chain_position <> expected_position THEN
        broken_position := e.chain_position; broken_id := e.id;
        reason := format('position %s follows position %s', e.chain_position, expected_position - 1);
        RETURN NEXT; RETURN;
      END IF;
      IF e.prev_hash <> expected_prev THEN
        broken_position := e.chain_position; broken_id := e.id;
        reason := 'previous-hash link does not match the preceding event';
        RETURN NEXT; RETURN;
      END IF;
      IF e.hash <> encode(sha256(convert_to(app_audit_canonical(e), 'UTF8')), 'hex') THEN
        broken_position := e.chain_position; broken_id := e.id;
        reason := 'content does not match its stored hash';
        RETURN NEXT; RETURN;
      END IF;
      checked := checked + 1;
      head_position := e.chain_position;
      head_hash := e.hash;
      expected_prev := e.hash;
      expected_position := e.chain_position + 1;
    END LOOP;
    RETURN NEXT;
  END $$;
REVOKE ALL ON FUNCTION app_verify_audit_chain() FROM PUBLIC;
GRANT EXECUTE ON FUNCTION app_verify_audit_chain() TO {{app_role}};

ALTER TABLE audit_events ENABLE ROW LEVEL SECURITY;
ALTER TABLE audit_events FORCE ROW LEVEL SECURITY;
-- Anyone may append, but only as themselves (or anonymously, for failed sign-ins).
CREATE POLICY audit_events_append ON audit_events FOR INSERT
  WITH CHECK (actor_id IS NULL OR actor_id = app_current_user_id());
-- Auditors read their initiatives' events; administrators read events outside any
-- initiative (sign-ins, invitations, role changes); everyone reads their own.
CREATE POLICY audit_events_read ON audit_events FOR SELECT
  USING (
    initiative_id IN (SELECT app_auditor_initiative_ids())
    OR (initiative_id IS NULL AND app_current_user_is_admin())
    OR actor_id = app_current_user_id()
  );
-- INSERT and SELECT only: no UPDATE, DELETE or TRUNCATE for the application.
GRANT SELECT, INSERT ON audit_events TO {{app_role}};
