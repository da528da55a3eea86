-- The mail state of notifications (see migration add-notification-mail-state). The writer
-- of an event may not update notifications (only their recipient may, to mark them read),
-- so each step is a SECURITY DEFINER function that changes the mail columns alone.

-- In the event's transaction: marks pending those of the given notifications, written by
-- the current person, whose recipient chose immediate mail; answers them with recipients.
CREATE OR REPLACE FUNCTION app_notification_mail_pending(ids uuid[]) RETURNS TABLE (id uuid, recipient_id uuid)
  LANGUAGE sql VOLATILE SECURITY DEFINER SET search_path = public
  AS $$
    UPDATE notifications n SET mail_state = 'pending'
      FROM users u LEFT JOIN notification_settings s ON s.user_id = u.id
     WHERE n.id = ANY(ids) AND n.actor_id = app_current_user_id() AND n.mail_state = 'none'
       AND u.id = n.recipient_id AND u.status = 'active' AND coalesce(s.mail, 'immediate') = 'immediate'
    RETURNING n.id, n.recipient_id
  $$;
REVOKE ALL ON FUNCTION app_notification_mail_pending(uuid[]) FROM PUBLIC;
GRANT EXECUTE ON FUNCTION app_notification_mail_pending(uuid[]) TO {{app_role}};

-- Claims pending mails for one sending attempt: those not claimed within the lease. A mail
-- already tried five times becomes failed instead. Answers the ids claimed.
CREATE OR REPLACE FUNCTION app_notification_mail_claim(ids uuid[], lease interval) RETURNS SETOF uuid
  LANGUAGE plpgsql VOLATILE SECURITY DEFINER SET search_path = public
  AS $$
  BEGIN
    UPDATE notifications SET mail_state = 'failed'
     WHERE id = ANY(ids) AND mail_state = 'pending' AND mail_attempts >= 5
       AND (mail_claimed_at IS NULL OR mail_claimed_at <= clock_timestamp() - lease);
    RETURN QUERY
      UPDATE notifications SET mail_claimed_at = clock_timestamp(), mail_attempts = mail_attempts + 1
       WHERE id = ANY(ids) AND mail_state = 'pending'
         AND (mail_claimed_at IS NULL OR mail_claimed_at <= clock_timestamp() - lease)
      RETURNING notifications.id;
  END
  $$;
REVOKE ALL ON FUNCTION app_notification_mail_claim(uuid[], interval) FROM PUBLIC;
GRANT EXECUTE ON FUNCTION app_notification_mail_claim(uuid[], interval) TO {{app_role}};

-- Marks claimed mails sent.
CREATE OR REPLACE FUNCTION app_notification_mail_sent(ids uuid[]) RETURNS void
  LANGUAGE sql VOLATILE SECURITY DEFINER SET search_path = public
  AS $$
    UPDATE notifications SET mail_state = 'sent' WHERE id = ANY(ids) AND mail_state = 'pending'
  $$;
REVOKE ALL ON FUNCTION app_notification_mail_sent(uuid[]) FROM PUBLIC;
GRANT EXECUTE ON FUNCTION app_notification_mail_sent(uuid[]) TO {{app_role}};

-- For the worker's sweep: pending mails older than `age` and free of a claim, with their
-- recipients (the sweep then reads each one under its recipient's own identity).
CREATE OR REPLACE FUNCTION app_notification_mail_overdue(age interval, lease interval) RETURNS TABLE (id uuid, recipient_id uuid)
  LANGUAGE sql STABLE SECURITY DEFINER SET search_path = public
  AS $$
    SELECT n.id, n.recipient_id FROM notifications n
     WHERE n.mail_state = 'pending' AND n.created_at <= clock_timestamp() - age
       AND (n.mail_claimed_at IS NULL OR n.mail_claimed_at <= clock_timestamp() - lease)
     ORDER BY n.created_at LIMIT 500
  $$;
REVOKE ALL ON FUNCTION app_notification_mail_overdue(interval, interval) FROM PUBLIC;
GRANT EXECUTE ON FUNCTION app_notification_mail_overdue(interval, interval) TO {{app_role}};
