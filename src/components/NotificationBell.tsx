/**
 * The bell in the header: the signed-in person's unread count, opening their latest
 * notifications (each a link to its run or brief, with a button to mark it read) and a
 * "Mark all read". It reads GET /api/me/notifications and writes
 * POST /api/me/notifications/read, and shows the count the server answers after each
 * mark. Keyboard: the bell is a button (Enter or Space opens it), Escape closes the list
 * and returns focus to the bell. It refreshes when the window regains focus.
 */
import { useCallback, useEffect, useId, useRef, useState } from 'react';
import { apiFetch } from '../lib/client/api';

interface Item { id: string; text: string; excerpt: string; link: string; at: string; read: boolean }
interface Inbox { unread: number; items: Item[] }

const when = (iso: string) => `${iso.slice(0, 16).replace('T', ' ')} UTC`;

export default function NotificationBell() {
  const [inbox, setInbox] = useState<Inbox | null>(null);
  const [open, setOpen] = useState(false);
  const [failed, setFailed] = useState(false);
  const button = useRef<HTMLButtonElement>(null);
  const panel = useRef<HTMLDivElement>(null);
  const listId = useId();

  const load = useCallback(async () => {
    try {
      setInbox(await apiFetch<Inbox>('/api/me/notifications?limit=20'));
      setFailed(false);
    } catch {
      setFailed(true);
    }
  }, []);

  useEffect(() => {
    void load();
    const refresh = () => void load();
    window.addEventListener('focus', refresh);
    return () => window.removeEventListener('focus', refresh);
  }, [load]);

  useEffect(() => {
    if (!open) return;
    const outside = (event: MouseEvent) => {
      if (!panel.current?.contains(event.target as Node) && !button.current?.contains(event.target as Node)) setOpen(false);
    };
    // Escape closes wherever focus is (a "Mark read" button that vanished leaves it on the page).
    const escape = (event: KeyboardEvent) => {
      if (event.key === 'Escape') { setOpen(false); button.current?.focus(); }
    };
    document.addEventListener('mousedown', outside);
    document.addEventListener('keydown', escape);
    return () => {
      document.removeEventListener('mousedown', outside);
      document.removeEventListener('keydown', escape);
    };
  }, [open]);

  const mark = async (body: { ids: string[] } | { all: true }) => {
    try {
      await apiFetch('/api/me/notifications/read', { method: 'POST', body });
    } finally {
      await load();
    }
  };

  const unread = inbox?.unread ?? 0;
  const label = unread === 0 ? 'Notifications, none unread' : `Notifications, ${unread} unread`;
  return (
    <div className="relative" data-testid="notification-bell" data-hydrated={inbox ? 'true' : undefined}>
      <button ref={button} type="button" aria-label={label} aria-expanded={open} aria-controls={listId}
        className="relative flex items-center rounded-sm px-1.5 py-1 text-estuary-100 hover:text-white focus-visible:outline-2 focus-visible:outline-white cursor-pointer"
        onClick={() => { setOpen(!open); if (!open) void load(); }}>
        <svg aria-hidden="true" width="20" height="20" viewBox="0 0 24 24" fill="none" stroke="currentColor" strokeWidth="1.8" strokeLinecap="round" strokeLinejoin="round">
          <path d="M6 8a6 6 0 1 1 12 0c0 7 3 9 3 9H3s3-2 3-9" /><path d="M10.3 21a1.94 1.94 0 0 0 3.4 0" />
        </svg>
        {unread > 0 && (
          <span data-testid="notification-count" className="absolute -right-1 -top-1 min-w-5 rounded-full bg-ochre-500 px-1 text-center text-xs font-semibold leading-5 text-estuary-900">
            {unread > 99 ? '99+' : unread}
          </span>
        )}
      </button>
      {open && (
        <div ref={panel} id={listId} role="region" aria-label="Notifications"
          className="absolute right-0 z-40 mt-2 w-[min(24rem,calc(100vw-1.5rem))] rounded-md border border-linen-200 bg-white text-ink-900 shadow-card">
          <div className="flex items-center justify-between border-b border-linen-200 px-4 py-2.5">
            <p className="text-sm font-semibold">Notifications</p>
            {unread > 0 && (
              <button type="button" className="text-sm text-estuary-700 underline underline-offset-2 cursor-pointer" onClick={() => void mark({ all: true })}>
                Mark all read
              </button>
            )}
          </div>
          {failed && <p className="px-4 py-3 text-sm text-ink-700" role="status">Notifications could not be loaded. Try again in a moment.</p>}
          {inbox && inbox.items.length === 0 && <p className="px-4 py-3 text-sm text-ink-500">Nothing yet. You will hear here when a run you follow changes.</p>}
          <ul className="max-h-96 overflow-y-auto" data-testid="notification-list">
            {inbox?.items.map((item) => (
              <li key={item.id} className={`border-b border-linen-100 px-4 py-2.5 text-sm ${item.read ? 'text-ink-500' : 'bg-linen-50'}`} data-read={item.read ? 'true' : 'false'}>
                <a href={item.link} className="font-medium text-estuary-900 underline-offset-2 hover:underline"
                  onClick={() => { if (!item.read) void apiFetch('/api/me/notifications/read', { method: 'POST', body: { ids: [item.id] } }); }}>
                  {!item.read && <span className="sr-only">Unread: </span>}{item.text}
                </a>
                {item.excerpt && <p className="mt-1 text-ink-700 line-clamp-3">“{item.excerpt}”</p>}
                <div className="mt-1 flex items-center justify-between text-xs text-ink-500">
                  <span>{when(item.at)}</span>
                  {!item.read && (
                    <button type="button" className="text-estuary-700 underline underline-offset-2 cursor-pointer" onClick={() => void mark({ ids: [item.id] })}>
                      Mark read
                    </button>
                  )}
                </div>
              </li>
            ))}
          </ul>
        </div>
      )}
    </div>
  );
}
