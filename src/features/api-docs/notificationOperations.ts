/** The notification endpoints of the OpenAPI catalogue (apiCatalogue.ts), kept in a file of their own. */
import { z } from 'zod';
import type { Operation } from './operation';
import { MailSettingBody, MarkReadBody, MarkReadResult, NotificationsQuery, NotificationsView } from '../notifications/notifications.schema';

export const NOTIFICATION_OPERATIONS: Operation[] = [
  { method: 'GET', path: '/api/me/notifications', tag: 'Me', summary: 'Your unread count and latest notifications', auth: 'session', query: NotificationsQuery, response: NotificationsView, status: 200,
    description: 'Runs submitted for review (clinicians), sent back with the note or signed off (the analyst who started the run), replies and @mentions in comments (the person named), briefs published (the initiative). Each names the run by title and short id and links to it; only your own are ever shown.' },
  { method: 'POST', path: '/api/me/notifications/read', tag: 'Me', summary: 'Mark notifications read: the ids named, or all', auth: 'session', body: MarkReadBody, response: MarkReadResult, status: 200 },
  { method: 'GET', path: '/api/me/notifications/settings', tag: 'Me', summary: 'How Crossgrain e-mails you your notifications', auth: 'session', response: MailSettingBody, status: 200 },
  { method: 'PUT', path: '/api/me/notifications/settings', tag: 'Me', summary: 'Choose immediate e-mail, a daily digest, or none', auth: 'session', body: MailSettingBody, response: z.object({ mail: z.string() }), status: 200 },
];
