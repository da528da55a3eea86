/** Notifications in words: pure, shared by the bell, the list and the e-mails. */
import type { NotificationKindName } from './notifications.schema';

/** The first 8 characters of a run id: how lists and notifications name a run. */
export const shortId = (id: string) => id.slice(0, 8);

/** The notification in one line, naming the run by title and short id (or the brief by title). */
export function notificationText(kind: NotificationKindName, actorName: string, title: string, runId: string | null): string {
  const subject = kind !== 'brief-published' && runId ? `“${title}” (run ${shortId(runId)})` : `“${title}”`;
  const verb: Record<NotificationKindName, string> = {
    submitted: `submitted ${subject} for review`,
    'sent-back': `sent back ${subject}`,
    'signed-off': `signed off ${subject}`,
    reply: `replied to your comment on ${subject}`,
    mention: `mentioned you in a comment on ${subject}`,
    'brief-published': `published the brief ${subject}`,
  };
  return `${actorName} ${verb[kind]}`;
}

/** Where a notification leads: the brief's page, or the run's. */
export const notificationLink = (row: { runId: string | null; briefId: string | null }) =>
  row.briefId ? `/briefs/${row.briefId}` : `/runs/${row.runId}`;

/** Whether the text names a person with "@Name" or "@email" (any letter case), not as the start of a longer word. */
export function mentions(body: string, person: { name: string; email: string }): boolean {
  const text = body.toLowerCase();
  return [person.email, person.name].filter((handle) => handle.trim().length > 0).some((handle) => {
    const needle = `@${handle.toLowerCase()}`;
    for (let at = text.indexOf(needle); at >= 0; at = text.indexOf(needle, at + 1)) {
      if (!/[\p{L}\p{N}_]/u.test(text.charAt(at + needle.length))) return true;
    }
    return false;
  });
}
