/**
 * The key under which a page of an initiative whose every part is worked out from records
 * that move the initiative's counter (the review board) may be served from memory
 * (lib/server/pageCache.ts). The counter is read in one round trip under the viewer's
 * identity, so an initiative the viewer may not see, or an archived one, gives no key and
 * the page answers as it always does.
 */
import { keptPageKey } from '@/lib/server/pageCache';
import { readAsUser, type SessionUser } from '@/lib/server/session';

export async function initiativePageKey(user: SessionUser, page: string, initiativeId: string, search: string): Promise<string | null> {
  const [row] = await readAsUser<{ stamp: string }>(
    user.id,
    `SELECT s.stamp::text AS stamp FROM initiative_stamps s JOIN initiatives i ON i.id = s.initiative_id
      WHERE s.initiative_id = :initiativeId AND i.archived_at IS NULL`,
    { initiativeId },
  );
  return row ? keptPageKey(page, initiativeId, row.stamp, user, search) : null;
}
