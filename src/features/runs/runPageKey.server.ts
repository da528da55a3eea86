/**
 * Whether a run's results page may be served from memory (lib/server/pageCache.ts), and
 * under which key. Only a run that has ended (succeeded, failed or cancelled) is kept:
 * every part of its page is then worked out from records that move the initiative's
 * counter (runs, the analysis, verifications, review steps, comments, briefs, the register
 * and plans, credibility ratings, people's names; migration add-initiative-stamps). The
 * run and the counter are read in one round trip under the viewer's identity (brought
 * along by the session's read, `along`, when the middleware had it read), so a run the
 * viewer may not see gives no key, and the page then answers as it always does.
 */
import { keptPageKey } from '@/lib/server/pageCache';
import { readRunStamp, type PageRead } from '@/lib/server/requestReads';
import type { SessionUser } from '@/lib/server/session';

const ENDED = new Set(['succeeded', 'failed', 'cancelled']);

export async function endedRunPageKey(user: SessionUser, runId: string, search: string, along: PageRead | null = null): Promise<string | null> {
  const row = await readRunStamp(user.id, runId, along);
  if (!row || row.stamp === null || !ENDED.has(row.status)) return null;
  return keptPageKey('run', runId, row.stamp, user, search);
}
