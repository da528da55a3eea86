-- Row-level security for notifications. A person sees and marks read only their own
-- notifications. A notification is written by the person whose action caused it, in the
-- transaction of that action, for a member of the same initiative; nobody edits or deletes
-- one except to mark it read. Each person reads and changes only their own e-mail choice.

-- Whether a user is an active member of an initiative. SECURITY DEFINER so the insert
-- policy can check the recipient whatever the writer may read.
CREATE OR REPLACE FUNCTION app_is_member_of(person uuid, initiative uuid) RETURNS boolean
  LANGUAGE sql STABLE SECURITY DEFINER SET search_path = public
  AS $$
    SELECT EXISTS (SELECT 1 FROM memberships m JOIN users u ON u.id = m.user_id
                    WHERE m.user_id = person AND m.initiative_id = initiative AND u.status = 'active')
  $$;
REVOKE ALL ON FUNCTION app_is_member_of(uuid, uuid) FROM PUBLIC;
GRANT EXECUTE ON FUNCTION app_is_member_of(uuid, uuid) TO {{app_role}};

ALTER TABLE notifications ENABLE ROW LEVEL SECURITY;
ALTER TABLE notifications FORCE ROW LEVEL SECURITY;
CREATE POLICY notifications_own_read ON notifications FOR SELECT
  USING (recipient_id = app_current_user_id());
CREATE POLICY notifications_own_update ON notifications FOR UPDATE
  USING (recipient_id = app_current_user_id()) WITH CHECK (recipient_id = app_current_user_id());
CREATE POLICY notifications_write ON notifications FOR INSERT
  WITH CHECK (
    actor_id = app_current_user_id()
    AND initiative_id IN (SELECT app_member_initiative_ids())
    AND app_is_member_of(recipient_id, initiative_id)
  );
-- Marking read is the only change.
GRANT SELECT, INSERT ON notifications TO {{app_role}};
GRANT UPDATE (read_at) ON notifications TO {{app_role}};

ALTER TABLE notification_settings ENABLE ROW LEVEL SECURITY;
ALTER TABLE notification_settings FORCE ROW LEVEL SECURITY;
CREATE POLICY notification_settings_own ON notification_settings FOR ALL
  USING (user_id = app_current_user_id()) WITH CHECK (user_id = app_current_user_id());
GRANT SELECT, INSERT, UPDATE ON notification_settings TO {{app_role}};

-- How each of the given people wants mail ('immediate' when they never chose), for the
-- sender of an event, who may not read another person's settings.
CREATE OR REPLACE FUNCTION app_notification_mail_choices(people uuid[]) RETURNS TABLE (user_id uuid, mail text)
  LANGUAGE sql STABLE SECURITY DEFINER SET search_path = public
  AS $$
    SELECT p.id, coalesce(s.mail, 'immediate') FROM unnest(people) AS p(id)
      LEFT JOIN notification_settings s ON s.user_id = p.id
  $$;
REVOKE ALL ON FUNCTION app_notification_mail_choices(uuid[]) FROM PUBLIC;
GRANT EXECUTE ON FUNCTION app_notification_mail_choices(uuid[]) TO {{app_role}};

-- The active people who chose a daily digest and whose last digest is older than the
-- given interval (or who never had one), for the digest job, which then reads each
-- person's notifications under that person's own identity.
CREATE OR REPLACE FUNCTION app_notification_digest_due(every interval) RETURNS SETOF uuid
  LANGUAGE sql STABLE SECURITY DEFINER SET search_path = public
  AS $$
    SELECT s.user_id FROM notification_settings s JOIN users u ON u.id = s.user_id
     WHERE s.mail = 'daily' AND u.status = 'active'
       AND (s.last_digest_at IS NULL OR s.last_digest_at <= now() - every)
  $$;
REVOKE ALL ON FUNCTION app_notification_digest_due(interval) FROM PUBLIC;
GRANT EXECUTE ON FUNCTION app_notification_digest_due(interval) TO {{app_role}};
