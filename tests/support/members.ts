/**
 * People signed in over HTTP, each a member of the initiative named for them, for the API
 * tests that check what each role may do.
 */
import { expect } from 'vitest';
import { hashPassword } from '@/lib/server/passwords';
import { addMember, makeUser } from './factories';
import { ApiClient } from './http';

export type MemberRole = 'analyst' | 'clinician' | 'auditor';

/** Makes one user per entry, adds them to its initiative in its role, and signs each in. */
export async function signedInMembers<K extends string>(
  password: string,
  people: readonly (readonly [K, string, MemberRole])[],
): Promise<{ ids: Record<K, string>; clients: Record<K, ApiClient> }> {
  const hash = await hashPassword(password);
  const ids = {} as Record<K, string>;
  const clients = {} as Record<K, ApiClient>;
  for (const [key, initiativeId, role] of people) {
    const user = await makeUser({ passwordHash: hash });
    await addMember(initiativeId, user.id, role);
    ids[key] = user.id;
    clients[key] = new ApiClient();
    expect((await clients[key].signIn(user.email, password)).status).toBe(204);
  }
  return { ids, clients };
}
