import type { Migration } from '../migrate';

/**
 * Notifications: one row per person told about an event of review or publication (a run
 * submitted, sent back or signed off; a reply or a mention in a comment; a brief
 * published), written in the transaction of the event itself. Each person's choice of
 * e-mail (immediately, a daily digest, or none) and the time of their last digest live in
 * notification_settings. Policies in policies/rls/011_notifications.sql.
 */
export const up: Migration = async ({ context }) => {
  await context.sql(`
    CREATE TABLE notifications (
      id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
      recipient_id uuid NOT NULL REFERENCES users(id),
      initiative_id uuid NOT NULL REFERENCES initiatives(id),
      actor_id uuid NOT NULL REFERENCES users(id),
      kind text NOT NULL CHECK (kind IN ('submitted', 'sent-back', 'signed-off', 'reply', 'mention', 'brief-published')),
      run_id uuid REFERENCES runs(id),
      brief_id uuid REFERENCES briefs(id),
      -- The run's (or brief's) title as it was at the event, so the notification reads the same later.
      title text NOT NULL CHECK (length(title) BETWEEN 1 AND 300),
      -- The sent-back note or the comment, shortened.
      excerpt text NOT NULL DEFAULT '' CHECK (length(excerpt) <= 500),
      created_at timestamptz NOT NULL DEFAULT clock_timestamp(),
      read_at timestamptz,
      CHECK (run_id IS NOT NULL OR brief_id IS NOT NULL)
    );
    -- The bell reads a person's latest notifications and counts the unread ones.
    CREATE INDEX notifications_recipient_idx ON notifications (recipient_id, created_at DESC);
    CREATE INDEX notifications_unread_idx ON notifications (recipient_id) WHERE read_at IS NULL;

    CREATE TABLE notification_settings (
      user_id uuid PRIMARY KEY REFERENCES users(id),
      mail text NOT NULL DEFAULT 'immediate' CHECK (mail IN ('immediate', 'daily', 'none')),
      last_digest_at timestamptz,
      updated_at timestamptz NOT NULL DEFAULT now()
    );
  `);
  await context.applyPolicyFile('011_notifications.sql');
};

export const down: Migration = async ({ context }) => {
  await context.sql(`
    DROP TABLE IF EXISTS notification_settings;
    DROP TABLE IF EXISTS notifications;
    DROP FUNCTION IF EXISTS app_notification_mail_choices(uuid[]);
    DROP FUNCTION IF EXISTS app_notification_digest_due(interval);
    DROP FUNCTION IF EXISTS app_is_member_of(uuid, uuid);
  `);
};
