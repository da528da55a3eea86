/**
 * Whole pages kept in memory, for pages whose every part is worked out from records that
 * move an initiative's counter (initiativeStamp.ts): a finished run's results page and the
 * review board. The key names the page, the counter read before its records, and the
 * viewer as the session gave them (identity, name, rights), so a page is served again only
 * to the same viewer and only while nothing it shows has changed. A page renders as usual
 * on a miss; the middleware keeps its HTML (before the request's script nonce is added,
 * which every response gets anew) when it answered 200.
 *
 * Memory is bounded by the pages' total size; the least recently used go first.
 */
import { createHash } from 'node:crypto';
import { joinWithNonce, splitAtScripts } from './securityHeaders';
import type { SessionUser } from './session';

/** At most this many bytes of HTML are kept. */
const CAPACITY_BYTES = 48 * 1024 * 1024;

/** A kept page: its UTF-8 bytes, cut where each script tag takes the response's nonce. */
export interface KeptPage {
  parts: Buffer[];
  bytes: number;
}

const pages = new Map<string, KeptPage>();
let kept = 0;

/**
 * The key of a kept page: the page, the record it shows, the initiative's counter read
 * before it, the viewer (everything about them a page may show or decide by) and the query.
 */
export function keptPageKey(page: string, id: string, stamp: string, user: SessionUser, search: string): string {
  const viewer = createHash('sha256').update(JSON.stringify([user.id, user.email, user.displayName, user.isAdmin, user.memberships])).digest('base64url');
  return `${page} ${id} ${stamp} ${viewer} ${search}`;
}

/**
 * The first step of a page that may be kept, given its key (null: not to be kept): the kept
 * page's answer when there is one; otherwise null, with the page marked to be kept once it
 * has rendered (the middleware keeps a 200's HTML).
 */
export function answerFromKept(locals: App.Locals, key: string | null): Response | null {
  if (key === null) return null;
  const page = keptPage(key);
  if (page) return serveKeptPage(locals, page);
  locals.pageCacheKey = key;
  return null;
}

/** A kept page, or undefined. */
function keptPage(key: string): KeptPage | undefined {
  const page = pages.get(key);
  if (page === undefined) return undefined;
  pages.delete(key);
  pages.set(key, page);
  return page;
}

/** Keeps a page's HTML under `key`; a page over a quarter of the capacity is not kept. */
export function keepPage(key: string, html: string): void {
  const parts = splitAtScripts(html);
  const bytes = parts.reduce((total, part) => total + part.length, 0);
  if (bytes > CAPACITY_BYTES / 4) return;
  const before = pages.get(key);
  if (before !== undefined) kept -= before.bytes;
  pages.delete(key);
  pages.set(key, { parts, bytes });
  kept += bytes;
  for (const [oldest, page] of pages) {
    if (kept <= CAPACITY_BYTES) break;
    pages.delete(oldest);
    kept -= page.bytes;
  }
}

/**
 * What a page returns to serve a kept page: an empty 200 that names the page in `locals`;
 * the middleware writes the page's bytes with the response's nonce into it, and adds the
 * security headers as for any page.
 */
function serveKeptPage(locals: App.Locals, page: KeptPage): Response {
  locals.keptPage = page;
  return new Response(null, { status: 200, headers: { 'Content-Type': 'text/html' } });
}

/** The body of a kept page for one response. */
export function keptPageBody(page: KeptPage, nonce: string): Uint8Array<ArrayBuffer> {
  return joinWithNonce(page.parts, nonce);
}
