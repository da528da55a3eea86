/**
 * The key under which a page of an initiative whose every part is worked out from records
 * that move the initiative's counter (the review board) may be served from memory
 * (lib/server/pageCache.ts). The counter is read in one round trip under the viewer's
 * identity (brought along by the session's read, `along`, when the middleware had it read),
 * so an initiative the viewer may not see, or an archived one, gives no key and the page
 * answers as it always does.
 */
import { keptPageKey } from '@/lib/server/pageCache';
import { readInitiativeStamp, type PageRead } from '@/lib/server/requestReads';
import type { SessionUser } from '@/lib/server/session';

export async function initiativePageKey(user: SessionUser, page: string, initiativeId: string, search: string, along: PageRead | null = null): Promise<string | null> {
  const stamp = await readInitiativeStamp(user.id, initiativeId, along);
  return stamp === null ? null : keptPageKey(page, initiativeId, stamp, user, search);
}
