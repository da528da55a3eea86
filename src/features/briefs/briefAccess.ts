/**
 * The first step of every endpoint and page about one brief: load it under the caller's
 * identity and check they may read it, answering 404 (not 403) otherwise, so a brief of
 * another initiative looks the same as no brief at all.
 */
import type { APIContext } from 'astro';
import type { Transaction } from 'sequelize';
import { authorize } from '@/lib/server/authorize';
import { notFound } from '@/lib/server/errors';
import { clientAddress } from '@/lib/server/http';
import type { SessionUser } from '@/lib/server/session';
import { getBriefRecord, type Actor, type BriefRecord } from './briefs.server';

export async function readableBrief(transaction: Transaction, user: SessionUser, briefId: string, options: { lock?: boolean } = {}): Promise<BriefRecord> {
  const brief = await getBriefRecord(transaction, briefId, options);
  if (!brief) throw notFound('That brief');
  authorize(user, 'read', 'Brief', { initiativeId: brief.initiativeId }, { hide: true });
  return brief;
}

/** Who acts, for the audit trail and the PDF's author. */
export function actorOf(user: SessionUser, context: APIContext): Actor {
  return { id: user.id, name: user.displayName, clientAddress: clientAddress(context) };
}
