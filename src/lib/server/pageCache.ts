/**
 * Whole pages kept in memory, for pages whose every part is worked out from records that
 * move an initiative's counter (initiativeStamp.ts): a finished run's results page and the
 * review board. The key names the page, the counter read before its records, and the
 * viewer as the session gave them (identity, name, rights), so a page is served again only
 * to the same viewer and only while nothing it shows has changed. A page renders as usual
 * on a miss; the middleware keeps its HTML (before the request's script nonce is added,
 * which every response gets anew) when it answered 200.
 *
 * Memory is bounded by the pages' total length; the least recently used go first.
 */
import { createHash } from 'node:crypto';
import type { SessionUser } from './session';

/** At most this many characters of HTML are kept (about 2 bytes each). */
const CAPACITY_CHARS = 32 * 1024 * 1024;

const pages = new Map<string, string>();
let kept = 0;

/** The viewer's part of a key: everything about them a page may show or decide by. */
export function viewerKey(user: SessionUser): string {
  return createHash('sha256').update(JSON.stringify([user.id, user.email, user.displayName, user.isAdmin, user.memberships])).digest('base64url');
}

/** A kept page, or undefined. */
export function keptPage(key: string): string | undefined {
  const html = pages.get(key);
  if (html === undefined) return undefined;
  pages.delete(key);
  pages.set(key, html);
  return html;
}

/** Keeps a page's HTML under `key`; a page longer than a quarter of the capacity is not kept. */
export function keepPage(key: string, html: string): void {
  if (html.length > CAPACITY_CHARS / 4) return;
  const before = pages.get(key);
  if (before !== undefined) kept -= before.length;
  pages.delete(key);
  pages.set(key, html);
  kept += html.length;
  for (const [oldest, page] of pages) {
    if (kept <= CAPACITY_CHARS) break;
    pages.delete(oldest);
    kept -= page.length;
  }
}

/** The answer for a kept page: the middleware adds the nonce and security headers as for any page. */
export function keptPageResponse(html: string): Response {
  return new Response(html, { status: 200, headers: { 'Content-Type': 'text/html' } });
}
