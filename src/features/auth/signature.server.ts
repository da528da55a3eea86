/**
 * Re-authentication for an electronic signature (a review decision): the signer enters
 * their password again. Only a person in a browser session can sign; an API token stands
 * for a script, so it is refused. A wrong password is refused like a failed sign-in: it
 * counts toward the same throttle (per account and per address), and it is audited, in a
 * transaction of its own so that the refusal stays recorded while the decision is not.
 */
import { User } from '../../../db/models';
import { withIdentity } from '@/lib/server/db';
import { AppError, forbidden, tooManyRequests } from '@/lib/server/errors';
import { verifyPassword } from '@/lib/server/passwords';
import type { SessionInfo } from '@/lib/server/session';
import { recordAudit } from '../audit/audit.server';
import { recordAttempt, throttleState } from './throttle.server';

export const SIGNATURE_REFUSED = 'That password is not right, so nothing was signed. Enter the password you sign in with.';

/** Throws unless the signer is in a browser session and the password is theirs. */
export async function confirmSigner(
  signer: { id: string; email: string },
  session: Pick<SessionInfo, 'via'> | null,
  password: string,
  clientAddress: string,
  subject: { runId: string; initiativeId: string },
): Promise<void> {
  if (session?.via !== 'cookie') {
    throw forbidden('An API token cannot sign. Sign in and sign off or send back on the run’s page, with your password.');
  }
  const outcome = await withIdentity(signer.id, async (transaction) => {
    const throttle = await throttleState(transaction, signer.email, clientAddress);
    if (throttle.blocked) return { kind: 'throttled' as const, retryAfter: throttle.retryAfterSeconds };
    const user = await User.findOne({ attributes: ['passwordHash', 'status'], where: { id: signer.id }, raw: true, transaction });
    const ok = Boolean(user?.passwordHash && user.status === 'active' && (await verifyPassword(user.passwordHash, password)));
    if (!ok) {
      // Only failures are counted: a signature is not a sign-in, so it clears nothing.
      await recordAttempt(transaction, signer.email, clientAddress, false);
      await recordAudit(transaction, {
        action: 'review.signature-refused', actorId: signer.id, subjectType: 'run', subjectId: subject.runId,
        initiativeId: subject.initiativeId, clientAddress, details: { reason: 'wrong-password' },
      });
    }
    return { kind: ok ? ('ok' as const) : ('refused' as const) };
  });
  if (outcome.kind === 'throttled') {
    const minutes = Math.ceil(outcome.retryAfter / 60);
    throw tooManyRequests(`Too many wrong passwords. Wait ${minutes} minute${minutes === 1 ? '' : 's'} and try again.`, outcome.retryAfter);
  }
  if (outcome.kind === 'refused') throw new AppError(403, 'signature-refused', SIGNATURE_REFUSED);
}
