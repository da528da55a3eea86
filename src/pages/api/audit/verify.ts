import { mayCheckChain, recordAudit, verifyAuditChain } from '@/features/audit/audit.server';
import { VerifyBody } from '@/features/audit/audit.schema';
import { forbidden } from '@/lib/server/errors';
import { clientAddress, endpoint, json, parseBody, requireUser } from '@/lib/server/http';

/**
 * POST /api/audit/verify: recomputes the whole hash chain and reports the first broken
 * link; with `{ "checkpoint" }` (a file from GET /api/audit/checkpoint) it also checks
 * that the chain still holds that head unchanged, which reveals truncation. Auditors (of
 * any initiative) and administrators; the check itself is recorded.
 */
export const POST = endpoint(async (context) => {
  const user = requireUser(context.locals);
  if (!mayCheckChain(user)) throw forbidden('Only auditors and administrators verify the audit trail.');
  const { checkpoint } = await parseBody(context.request, VerifyBody);
  const report = await context.locals.db(async (t) => {
    const result = await verifyAuditChain(t, checkpoint);
    await recordAudit(t, {
      action: 'audit.verified', actorId: user.id, clientAddress: clientAddress(context),
      details: {
        checked: result.checked, intact: result.intact, headPosition: result.headPosition, brokenPosition: result.broken?.position ?? null,
        checkpointPosition: checkpoint?.position ?? null, checkpointHolds: result.checkpoint?.holds ?? null,
      },
    });
    return result;
  });
  return json(report);
});
