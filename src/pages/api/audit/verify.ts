import { recordAudit, verifyAuditChain } from '../../../features/audit/audit.server';
import { forbidden } from '../../../lib/server/errors';
import { clientAddress, endpoint, json, requireUser } from '../../../lib/server/http';

/**
 * POST /api/audit/verify: recomputes the whole hash chain and reports the first broken
 * link. Auditors (of any initiative) and administrators; the check itself is recorded.
 */
export const POST = endpoint(async (context) => {
  const user = requireUser(context.locals);
  const auditor = user.memberships.some((m) => m.role === 'auditor');
  if (!auditor && !user.isAdmin) throw forbidden('Only auditors and administrators verify the audit trail.');
  const report = await context.locals.db(async (t) => {
    const result = await verifyAuditChain(t);
    await recordAudit(t, {
      action: 'audit.verified', actorId: user.id, clientAddress: clientAddress(context),
      details: { checked: result.checked, intact: result.intact, headPosition: result.headPosition, brokenPosition: result.broken?.position ?? null },
    });
    return result;
  });
  return json(report);
});
