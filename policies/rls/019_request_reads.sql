-- The reads on every request's path, as PL/pgSQL functions (migration add-request-reads).
--
-- Sent as text, each of these reads was planned anew on every request, row-level-security
-- expressions included, which cost the database about 1 ms of CPU per read. A PL/pgSQL
-- function keeps the plan of each of its statements for the life of the connection, and the
-- app calls them as prepared statements, so a read costs a few tenths of that.
--
-- The reads of initiative data (a run, an initiative's counter) are SECURITY INVOKER: they
-- run as the app role, under row-level security, with the identity (app.user_id) set to the
-- viewer for the read and put back as it was before they return, so they leave nothing
-- behind even inside a longer transaction. They grant nothing the app role could not do
-- with set_config and a query of its own. The reads of identity (a session, a user's own
-- memberships) are explained where they are defined.

-- The two helpers every policy calls, now in PL/pgSQL for the same reason: a SQL function
-- that is SECURITY DEFINER is never inlined, and its body was planned again in every query
-- whose policies called it. Same statements, same meaning as in 001_identity.sql.
CREATE OR REPLACE FUNCTION app_member_initiative_ids() RETURNS SETOF uuid
  LANGUAGE plpgsql STABLE SECURITY DEFINER SET search_path = public
  AS $$
  BEGIN
    RETURN QUERY
      SELECT m.initiative_id FROM memberships m JOIN users u ON u.id = m.user_id
       WHERE m.user_id = app_current_user_id() AND u.status = 'active';
  END
  $$;

CREATE OR REPLACE FUNCTION app_current_user_is_admin() RETURNS boolean
  LANGUAGE plpgsql STABLE SECURITY DEFINER SET search_path = public
  AS $$
  BEGIN
    RETURN coalesce((SELECT u.is_admin AND u.status = 'active' FROM users u WHERE u.id = app_current_user_id()), false);
  END
  $$;

-- A user's memberships in initiatives that are not archived, by name: what row-level
-- security shows the user of their own memberships, and none for a deactivated user.
-- SECURITY DEFINER with that rule written out, like app_member_initiative_ids, which the
-- policies call for the same list: run under the policies, the same read cost twice as much
-- database CPU (each policy calls the helpers again), and it is on every request's path
-- (a session's, a personal API token's). It gives the app role nothing new: the role reads
-- users and sessions freely and may take any identity.
CREATE OR REPLACE FUNCTION app_read_memberships(viewer uuid)
  RETURNS TABLE (initiative_id uuid, initiative_name text, initiative_slug text, role text)
  LANGUAGE plpgsql STABLE SECURITY DEFINER SET search_path = public
  AS $$
  #variable_conflict use_column
  BEGIN
    RETURN QUERY
      SELECT m.initiative_id, i.name, i.slug, m.role
        FROM memberships m
        JOIN users u ON u.id = m.user_id
        JOIN initiatives i ON i.id = m.initiative_id
       WHERE m.user_id = viewer AND u.status = 'active' AND i.archived_at IS NULL
       ORDER BY i.name;
  END
  $$;

-- A session (the SHA-256 of the cookie's token) with its user and the user's memberships
-- (app_read_memberships, as JSON). Sessions and users carry no row-level security
-- (001_identity.sql). No row when there is no such session.
CREATE OR REPLACE FUNCTION app_read_session(session_id text)
  RETURNS TABLE (id text, user_id uuid, expires_at timestamptz, created_at timestamptz, last_seen_at timestamptz,
                 email text, display_name text, is_admin boolean, status text, memberships json)
  LANGUAGE plpgsql STABLE SECURITY DEFINER SET search_path = public
  AS $$
  #variable_conflict use_column
  BEGIN
    RETURN QUERY
      SELECT s.id, s.user_id, s.expires_at, s.created_at, s.last_seen_at, u.email, u.display_name, u.is_admin, u.status,
             coalesce((SELECT json_agg(json_build_object('initiativeId', m.initiative_id, 'initiativeName', m.initiative_name,
                                                         'initiativeSlug', m.initiative_slug, 'role', m.role)
                                   ORDER BY m.initiative_name)
                         FROM app_read_memberships(s.user_id) m), '[]'::json)
        FROM sessions s JOIN users u ON u.id = s.user_id
       WHERE s.id = session_id;
  END
  $$;

-- A run as its viewer may see it: its initiative, its status and the initiative's counter
-- (initiative_stamps, 018). No row when the viewer may not see the run.
CREATE OR REPLACE FUNCTION app_read_run_stamp(viewer uuid, run_id uuid)
  RETURNS TABLE (initiative_id uuid, status text, stamp bigint)
  LANGUAGE plpgsql SECURITY INVOKER SET search_path = public
  AS $$
  #variable_conflict use_column
  DECLARE
    before text := current_setting('app.user_id', true);
  BEGIN
    PERFORM set_config('app.user_id', viewer::text, true);
    RETURN QUERY
      SELECT r.initiative_id, r.status, s.stamp
        FROM runs r LEFT JOIN initiative_stamps s ON s.initiative_id = r.initiative_id
       WHERE r.id = run_id;
    PERFORM set_config('app.user_id', coalesce(before, ''), true);
  END
  $$;

-- The counter of an initiative that is not archived, as its viewer may see it; NULL when
-- the viewer may not see the initiative.
CREATE OR REPLACE FUNCTION app_read_initiative_stamp(viewer uuid, initiative uuid) RETURNS bigint
  LANGUAGE plpgsql SECURITY INVOKER SET search_path = public
  AS $$
  DECLARE
    before text := current_setting('app.user_id', true);
    counter bigint;
  BEGIN
    PERFORM set_config('app.user_id', viewer::text, true);
    SELECT s.stamp INTO counter
      FROM initiative_stamps s JOIN initiatives i ON i.id = s.initiative_id
     WHERE s.initiative_id = initiative AND i.archived_at IS NULL;
    PERFORM set_config('app.user_id', coalesce(before, ''), true);
    RETURN counter;
  END
  $$;

REVOKE ALL ON FUNCTION app_read_session(text) FROM PUBLIC;
REVOKE ALL ON FUNCTION app_read_memberships(uuid) FROM PUBLIC;
REVOKE ALL ON FUNCTION app_read_run_stamp(uuid, uuid) FROM PUBLIC;
REVOKE ALL ON FUNCTION app_read_initiative_stamp(uuid, uuid) FROM PUBLIC;
GRANT EXECUTE ON FUNCTION app_read_session(text) TO {{app_role}};
GRANT EXECUTE ON FUNCTION app_read_memberships(uuid) TO {{app_role}};
GRANT EXECUTE ON FUNCTION app_read_run_stamp(uuid, uuid) TO {{app_role}};
GRANT EXECUTE ON FUNCTION app_read_initiative_stamp(uuid, uuid) TO {{app_role}};
