/**
 * Invitations after they are sent: an administrator can send a new link (the old one
 * stops working at once) or revoke the invitation. A revoked invitation keeps the person
 * on the list as "invitation revoked" (their account stays deactivated, never having had a
 * password), because the audit trail names them and a record must not point at no one; a
 * new link can be sent to them later, which makes them invited again.
 */
import type { Transaction } from 'sequelize';
import { fn } from 'sequelize';
import { AuthToken, User } from '../../../db/models';
import { publicUrl } from '@/lib/server/env';
import { conflict, notFound } from '@/lib/server/errors';
import { renderEmail, sendMail } from '@/lib/server/mail';
import { recordAudit } from '../audit/audit.server';
import { issueToken } from '../auth/auth.server';

/** The administrator acting, and the address they act from. */
interface Actor {
  id: string;
  address: string;
}

/** The invitation e-mail, sent after the transaction commits. */
export function invitationMail(to: { email: string; displayName: string }, token: string): () => Promise<unknown> {
  const link = `${publicUrl()}/invitation?token=${encodeURIComponent(token)}`;
  const email = renderEmail({
    heading: "You're invited to Crossgrain",
    paragraphs: [
      `Hello ${to.displayName},`,
      'You have been invited to Crossgrain, the effect-modification review board of your quality-improvement team.',
      'Set your password to finish. The link works once, for 7 days.',
    ],
    action: { label: 'Set your password', url: link },
  });
  return () => sendMail({ to: to.email, subject: "You're invited to Crossgrain", ...email });
}

async function neverActivated(transaction: Transaction, userId: string) {
  const user = await User.findByPk(userId, { attributes: ['id', 'email', 'displayName', 'status', 'passwordHash'], lock: transaction.LOCK.UPDATE, transaction });
  if (!user) throw notFound('That person');
  if (user.passwordHash) throw conflict('This person has already accepted their invitation; there is no invitation to resend or revoke.');
  return user;
}

/** Sends a new invitation link (7 days); the earlier link no longer works. Also re-invites after a revocation. */
export async function resendInvitation(transaction: Transaction, actor: Actor, userId: string): Promise<{ send: () => Promise<unknown> }> {
  const user = await neverActivated(transaction, userId);
  const wasRevoked = user.status !== 'invited';
  if (wasRevoked) await user.update({ status: 'invited' }, { transaction });
  const token = await issueToken(transaction, userId, 'invitation', actor.id);
  await recordAudit(transaction, {
    action: 'auth.invitation-resent', actorId: actor.id, subjectType: 'user', subjectId: userId, clientAddress: actor.address,
    details: { afterRevocation: wasRevoked },
  });
  return { send: invitationMail(user, token) };
}

/** Revokes an open invitation: its link stops working and the person cannot sign in. */
export async function revokeInvitation(transaction: Transaction, actor: Actor, userId: string): Promise<void> {
  const user = await neverActivated(transaction, userId);
  if (user.status !== 'invited') throw conflict('This invitation is already revoked.');
  await AuthToken.update({ usedAt: fn('now') }, { where: { userId, purpose: 'invitation', usedAt: null }, transaction });
  await user.update({ status: 'deactivated' }, { transaction });
  await recordAudit(transaction, {
    action: 'auth.invitation-revoked', actorId: actor.id, subjectType: 'user', subjectId: userId, clientAddress: actor.address,
  });
}
