/** On the profile page: how Crossgrain e-mails the person their notifications (immediately, a daily digest, or none). */
import { useState } from 'react';
import { ApiError, apiFetch } from '@/lib/client/api';
import { HydratedFieldset } from '@/components/ui/HydratedFieldset';
import { MAIL_CHOICES, MAIL_CHOICE_LABEL, type MailChoice } from './notifications.schema';

export default function NotificationMail({ initial }: { initial: MailChoice }) {
  const [choice, setChoice] = useState<MailChoice>(initial);
  const [message, setMessage] = useState('');
  const save = async (next: MailChoice) => {
    const before = choice;
    setChoice(next);
    setMessage('Saving…');
    try {
      await apiFetch('/api/me/notifications/settings', { method: 'PUT', body: { mail: next } });
      setMessage('Saved.');
    } catch (error) {
      setChoice(before);
      setMessage(error instanceof ApiError ? error.message : 'The choice could not be saved. Try again.');
    }
  };
  return (
    <section className="card p-5" aria-labelledby="notification-mail-heading" data-testid="notification-mail">
      <h2 id="notification-mail-heading" className="text-lg">Notification e-mail</h2>
      <p className="text-sm text-ink-700 mt-1">
        The bell in the header lists runs submitted to you, runs of yours sent back or signed off, replies and mentions, and published briefs.
        Choose whether Crossgrain also e-mails them to you.
      </p>
      <form className="mt-3 space-y-1.5 text-sm" onSubmit={(event) => event.preventDefault()}>
        <HydratedFieldset>
          <legend className="sr-only">Notification e-mail</legend>
          {MAIL_CHOICES.map((value) => (
            <label key={value} className="flex items-center gap-2">
              <input type="radio" name="notification-mail" value={value} checked={choice === value} onChange={() => void save(value)} />
              {MAIL_CHOICE_LABEL[value]}
            </label>
          ))}
        </HydratedFieldset>
      </form>
      <p role="status" className="text-sm text-ink-500 mt-2 min-h-5">{message}</p>
    </section>
  );
}
