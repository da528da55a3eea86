import { defineAbilityFor, subject, type Action, type AppAbility, type SubjectFields, type SubjectName } from '../../../policies/abilities';
import { forbidden, notFound, unauthenticated } from './errors';
import type { SessionUser } from './session';

/** The abilities of the request's user (none when signed out). */
export function abilityOf(user: SessionUser | null): AppAbility {
  return defineAbilityFor(user);
}

/**
 * Throws unless the user may perform `action` on the subject. Signed-out callers get 401.
 * `hide` turns a refusal into 404, for records whose existence the caller must not learn
 * (another initiative's records).
 */
export function authorize(
  user: SessionUser | null,
  action: Action,
  type: SubjectName,
  fields: SubjectFields = {},
  options: { hide?: boolean } = {},
): void {
  if (!user) throw unauthenticated();
  const ability = abilityOf(user);
  const allowed = Object.keys(fields).length === 0 ? ability.can(action, type) : ability.can(action, subject(type, fields));
  if (allowed) return;
  throw options.hide ? notFound() : forbidden();
}

/** True when the user may perform `action` on the subject. */
export function can(user: SessionUser | null, action: Action, type: SubjectName, fields: SubjectFields = {}): boolean {
  if (!user) return false;
  const ability = abilityOf(user);
  return Object.keys(fields).length === 0 ? ability.can(action, type) : ability.can(action, subject(type, fields));
}

/**
 * The caller's membership of an initiative, or 404 when they have none (so outsiders do
 * not learn that the initiative exists). Signed-out callers get 401.
 */
export function requireMember(user: SessionUser | null, initiativeId: string): SessionUser['memberships'][number] {
  if (!user) throw unauthenticated();
  const membership = user.memberships.find((m) => m.initiativeId === initiativeId);
  if (!membership) throw notFound('That initiative');
  return membership;
}
