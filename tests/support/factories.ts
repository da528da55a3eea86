/**
 * Factories for database tests: each test makes its own initiatives and users with
 * unique names instead of truncating tables, so tests never depend on each other.
 * They write as the owner role (which bypasses row-level security) because they set up
 * the world the application role is then tested against.
 */
import { randomUUID } from 'node:crypto';
import { QueryTypes, type Sequelize } from 'sequelize';
import { createSequelize } from '../../db/connection';
import type { Role } from '../../db/models';

let owner: Sequelize | null = null;

/** The owner-role connection used to arrange test data. */
export function ownerDb(): Sequelize {
  owner ??= createSequelize('owner', { poolMax: 4 });
  return owner;
}

export async function closeOwnerDb(): Promise<void> {
  await owner?.close();
  owner = null;
}

const unique = () => randomUUID().slice(0, 8);

export async function makeUser(options: { isAdmin?: boolean; status?: string; passwordHash?: string | null; email?: string } = {}) {
  const tag = unique();
  const [row] = await ownerDb().query<{ id: string; email: string }>(
    `INSERT INTO users (email, display_name, password_hash, status, is_admin)
     VALUES (:email, :name, :hash, :status, :isAdmin) RETURNING id, email`,
    {
      replacements: {
        email: options.email ?? `user-${tag}@test.example`,
        name: `Test user ${tag}`,
        hash: options.passwordHash ?? null,
        status: options.status ?? 'active',
        isAdmin: options.isAdmin ?? false,
      },
      type: QueryTypes.SELECT,
    },
  );
  return row;
}

export async function makeInitiative(name = `Test initiative ${unique()}`) {
  const slug = `test-${unique()}`;
  const [row] = await ownerDb().query<{ id: string; name: string }>(
    `INSERT INTO initiatives (name, slug, organisation) VALUES (:name, :slug, 'Test organisation') RETURNING id, name`,
    { replacements: { name, slug }, type: QueryTypes.SELECT },
  );
  return row;
}

export async function addMember(initiativeId: string, userId: string, role: Role) {
  await ownerDb().query(
    'INSERT INTO memberships (initiative_id, user_id, role) VALUES (:initiativeId, :userId, :role)',
    { replacements: { initiativeId, userId, role } },
  );
}
