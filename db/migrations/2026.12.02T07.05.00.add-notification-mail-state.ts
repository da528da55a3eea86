import { readFileSync } from 'node:fs';
import path from 'node:path';
import type { Migration } from '../migrate';

/**
 * Immediate notification e-mail that survives a stopped process. A notification whose
 * recipient chose immediate mail is marked `pending` in the transaction of its event; the
 * sender claims it (a five-minute lease), sends, and marks it `sent`. The worker's sweep
 * sends what is still pending a minute later, so a process that stops between the commit
 * and the send loses no mail, and a claimed mail is sent once. After five failed attempts a
 * mail is `failed` and stays in the bell. Rows from before stay `none`: they are not sent
 * again. Policies in policies/rls/015_notification_mail.sql.
 */
export const up: Migration = async ({ context }) => {
  await context.sql(`
    ALTER TABLE notifications
      ADD COLUMN mail_state text NOT NULL DEFAULT 'none' CHECK (mail_state IN ('none', 'pending', 'sent', 'failed')),
      ADD COLUMN mail_attempts integer NOT NULL DEFAULT 0,
      ADD COLUMN mail_claimed_at timestamptz;
    CREATE INDEX notifications_mail_pending_idx ON notifications (created_at) WHERE mail_state = 'pending';
    -- Replaced by app_notification_mail_pending, which reads the choice as it marks.
    DROP FUNCTION IF EXISTS app_notification_mail_choices(uuid[]);
  `);
  await context.applyPolicyFile('015_notification_mail.sql');
};

export const down: Migration = async ({ context }) => {
  await context.sql(`
    DROP FUNCTION IF EXISTS app_notification_mail_pending(uuid[]);
    DROP FUNCTION IF EXISTS app_notification_mail_claim(uuid[], interval);
    DROP FUNCTION IF EXISTS app_notification_mail_sent(uuid[]);
    DROP FUNCTION IF EXISTS app_notification_mail_overdue(interval, interval);
    DROP INDEX IF EXISTS notifications_mail_pending_idx;
    ALTER TABLE notifications DROP COLUMN mail_state, DROP COLUMN mail_attempts, DROP COLUMN mail_claimed_at;
  `);
  // The function this migration replaced, as policies/rls/011_notifications.sql made it.
  const policy = readFileSync(path.join(import.meta.dirname, '../../policies/rls/011_notifications.sql'), 'utf8');
  const start = policy.indexOf('CREATE OR REPLACE FUNCTION app_notification_mail_choices');
  const end = policy.indexOf('TO {{app_role}};', start) + 'TO {{app_role}};'.length;
  await context.sql(policy.slice(start, end));
};
