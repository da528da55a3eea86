/**
 * The preamble of every page under /initiatives/[id]: sign-in, the initiative read inside
 * the request's transaction, the access check and the 404. The page's own data is loaded
 * in the same transaction by `load`. The heading and tabs are src/layouts/InitiativeLayout.astro.
 */
import type { AstroGlobal } from 'astro';
import type { Transaction } from 'sequelize';
import type { Role } from '../../../db/models';
import type { Action, SubjectName } from '../../../policies/abilities';
import { can } from '@/lib/server/authorize';
import { signInRedirect } from '@/lib/server/pageHelpers';
import type { SessionUser } from '@/lib/server/session';
import { getInitiative, type InitiativeOverview } from './initiatives.server';

/** Who may see the page: any member of the initiative, or whoever may perform an action on a subject in it. */
export type InitiativePageAccess = 'member' | { action: Action; subject: SubjectName };

export interface InitiativePageContext {
  user: SessionUser;
  initiative: InitiativeOverview;
  /** The user's role in the initiative; undefined when the access rule lets a non-member in. */
  role: Role | undefined;
}

/**
 * The page's data, or: a Response (the sign-in redirect) that the page returns as it is;
 * null when the initiative does not exist for this user or the access is refused, with the
 * response status set to 404 (the page shows NotFound, so outsiders learn nothing).
 */
export async function initiativePage<T extends object>(
  astro: AstroGlobal,
  access: InitiativePageAccess,
  load: (transaction: Transaction, initiative: InitiativeOverview) => Promise<T>,
): Promise<Response | (InitiativePageContext & T) | null> {
  const user = astro.locals.user;
  if (!user) return signInRedirect(astro);
  const data = await astro.locals.db(async (transaction) => {
    const initiative = await getInitiative(transaction, astro.params.id ?? '');
    if (!initiative || !allowed(user, access, initiative.id)) return null;
    const role = user.memberships.find((m) => m.initiativeId === initiative.id)?.role;
    return { user, initiative, role, ...(await load(transaction, initiative)) };
  });
  if (!data) astro.response.status = 404;
  return data;
}

function allowed(user: SessionUser, access: InitiativePageAccess, initiativeId: string): boolean {
  if (access === 'member') return user.memberships.some((m) => m.initiativeId === initiativeId);
  return can(user, access.action, access.subject, { initiativeId });
}
