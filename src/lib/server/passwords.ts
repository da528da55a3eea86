import { hash, verify } from '@node-rs/argon2';

/** @node-rs/argon2's Algorithm.Argon2id (a const enum, which isolated modules cannot read). */
const ARGON2ID = 2;

/**
 * argon2id parameters: at least OWASP's password storage cheat sheet minimum
 * (m = 19 MiB, t = 2, p = 1). Stored hashes carry their parameters (PHC string format),
 * so raising these later still verifies old hashes.
 */
export const ARGON2_PARAMETERS = {
  algorithm: ARGON2ID,
  memoryCost: 19_456,
  timeCost: 2,
  parallelism: 1,
} as const;

/** Hashes a password as an argon2id PHC string. */
export function hashPassword(password: string): Promise<string> {
  return hash(password, ARGON2_PARAMETERS);
}

/** Checks a password against a stored hash; false for a malformed hash rather than throwing. */
export async function verifyPassword(storedHash: string, password: string): Promise<boolean> {
  try {
    return await verify(storedHash, password);
  } catch {
    return false;
  }
}
