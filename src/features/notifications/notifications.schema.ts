/**
 * Notifications: the shapes of the bell's list, the mark-read body and the e-mail choice.
 * A notification names its run (title and short id) or brief, and links to it.
 */
import { z } from 'zod';

export const NOTIFICATION_KINDS = ['submitted', 'sent-back', 'signed-off', 'reply', 'mention', 'brief-published'] as const;
export type NotificationKindName = (typeof NOTIFICATION_KINDS)[number];

export const MAIL_CHOICES = ['immediate', 'daily', 'none'] as const;
export type MailChoice = (typeof MAIL_CHOICES)[number];

export const MAIL_CHOICE_LABEL: Record<MailChoice, string> = {
  immediate: 'Right away, one e-mail per notification',
  daily: 'Once a day, a digest of what is unread',
  none: 'No e-mail: the bell only',
};

export const NotificationItem = z.object({
  id: z.uuid(),
  kind: z.enum(NOTIFICATION_KINDS),
  /** One line in words: "Dr Rao sent back Call-back by age band (run 1a2b3c4d)". */
  text: z.string(),
  /** The note or comment that came with the event, shortened; empty when none. */
  excerpt: z.string(),
  runId: z.uuid().nullable(),
  /** The first 8 characters of the run's id. */
  shortRunId: z.string().nullable(),
  briefId: z.uuid().nullable(),
  /** Where the notification leads: the run's page or the brief's. */
  link: z.string(),
  actor: z.object({ id: z.uuid(), name: z.string() }),
  at: z.string(),
  read: z.boolean(),
});
export type NotificationItem = z.infer<typeof NotificationItem>;

export const NotificationsView = z
  .object({ unread: z.number().int().nonnegative(), items: z.array(NotificationItem) })
  .meta({ id: 'Notifications' });
export type NotificationsView = z.infer<typeof NotificationsView>;

export const NotificationsQuery = z.object({
  limit: z.coerce.number().int().min(1, 'Ask for at least one notification.').max(100, 'Ask for at most 100 notifications.').default(20),
});

export const MarkReadBody = z
  .union([
    z.object({ ids: z.array(z.uuid('Each id must be a notification id.')).min(1, 'Name at least one notification.').max(200, 'Mark at most 200 at once.') }).strict(),
    z.object({ all: z.literal(true) }).strict(),
  ], { message: 'Send `ids` (a list of notification ids) or `all: true`.' })
  .meta({ id: 'NotificationsReadRequest' });
export type MarkReadBody = z.infer<typeof MarkReadBody>;

export const MarkReadResult = z.object({ marked: z.number().int().nonnegative(), unread: z.number().int().nonnegative() }).meta({ id: 'NotificationsReadResult' });

export const MailSettingBody = z
  .object({ mail: z.enum(MAIL_CHOICES, { message: 'Choose immediate, daily or none.' }) })
  .meta({ id: 'NotificationMailSetting' });
