import { mayCheckChain, recordAudit, takeCheckpoint } from '@/features/audit/audit.server';
import { CheckpointQuery } from '@/features/audit/audit.schema';
import { conflict, forbidden } from '@/lib/server/errors';
import { clientAddress, endpoint, parseQuery, requireUser } from '@/lib/server/http';

/**
 * GET /api/audit/checkpoint: the chain's head now (position, hash, times) as a checkpoint
 * file to keep outside the database, e.g. in the governance team's records. Checking the
 * chain against it later (POST /api/audit/verify) reveals removed newest events. Auditors
 * and administrators; each export is itself an audit event, written after the head was
 * read, so the checkpoint names the event before its own.
 */
export const GET = endpoint(async (context) => {
  const user = requireUser(context.locals);
  if (!mayCheckChain(user)) throw forbidden('Only auditors and administrators export audit checkpoints.');
  const { download } = parseQuery(context.url, CheckpointQuery);
  const checkpoint = await context.locals.db(async (t) => {
    const taken = await takeCheckpoint(t);
    if (!taken) throw conflict('The audit trail holds no events yet.');
    await recordAudit(t, {
      action: 'audit.checkpoint-exported', actorId: user.id, clientAddress: clientAddress(context),
      details: { position: taken.position, hash: taken.hash },
    });
    return taken;
  });
  const headers: Record<string, string> = { 'Content-Type': 'application/json; charset=utf-8', 'Cache-Control': 'no-store' };
  if (download === '1') headers['Content-Disposition'] = `attachment; filename="crossgrain-audit-checkpoint-${checkpoint.position}.json"`;
  return new Response(`${JSON.stringify(checkpoint, null, 2)}\n`, { status: 200, headers });
});
