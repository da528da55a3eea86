/**
 * Password reset (issue 13): a known and an unknown address run the same statements in
 * the same order (so the answer's timing cannot tell them apart; the mail leaves after the
 * answer), and requests are throttled per account and per address with one 429 that does
 * not say whether the account exists. Timing itself is measured only in benches.
 */
import { afterAll, describe, expect, it } from 'vitest';
import { requestPasswordReset } from '@/features/auth/auth.server';
import { sequelize } from '@/lib/server/db';
import { env } from '@/lib/server/env';
import { closeOwnerDb, makeUser } from '../support/factories';

afterAll(async () => {
  await closeOwnerDb();
});

let addressCounter = 0;
const freshAddress = () => `192.0.2.${(addressCounter += 1)}`;

/** The statements a call runs, with every literal value blanked out. */
async function statementsOf(call: () => Promise<void>): Promise<string[]> {
  const seen: string[] = [];
  // Sequelize reads its `logging` option at each query; its type does not declare `options`.
  const options: { logging?: unknown } = Reflect.get(sequelize, 'options');
  const previous = options.logging;
  options.logging = (sql: string) => {
    seen.push(sql.replace(/^Executing \([^)]*\): /, '').replace(/'(?:[^']|'')*'/g, '?').replace(/\b\d+(\.\d+)?\b/g, 'N').replace(/\bNULL\b/g, '?'));
  };
  try {
    await call();
  } finally {
    options.logging = previous;
  }
  return seen;
}

describe('password reset', () => {
  it('runs the same statements for a known account as for an unknown address', async () => {
    const user = await makeUser();
    const known = await statementsOf(() => requestPasswordReset(user.email, { address: freshAddress(), userAgent: null }));
    const unknown = await statementsOf(() => requestPasswordReset(`nobody-${Date.now()}@test.example`, { address: freshAddress(), userAgent: null }));
    expect(known.length).toBeGreaterThan(3);
    expect(unknown).toEqual(known);
  });

  it('refuses the request past the per-account limit with a 429 that reads the same for an unknown address', async () => {
    const user = await makeUser();
    const limit = env.CROSSGRAIN_RESET_MAX_PER_ACCOUNT;
    const refusals: unknown[] = [];
    for (const email of [user.email, `nobody-${Date.now()}@test.example`]) {
      for (let i = 0; i < limit; i += 1) await requestPasswordReset(email, { address: freshAddress(), userAgent: null });
      const refused = await requestPasswordReset(email, { address: freshAddress(), userAgent: null }).then(
        () => null,
        (error: unknown) => error,
      );
      expect(refused).toMatchObject({ status: 429, code: 'too-many-requests' });
      refusals.push(refused instanceof Error ? refused.message : refused);
    }
    expect(refusals[0]).toBe(refusals[1]);
  });

  it('refuses the request past the per-address limit, whichever accounts are named', async () => {
    const address = freshAddress();
    for (let i = 0; i < env.CROSSGRAIN_RESET_MAX_PER_ADDRESS; i += 1) {
      await requestPasswordReset(`spray-${i}-${Date.now()}@test.example`, { address, userAgent: null });
    }
    await expect(requestPasswordReset(`spray-last-${Date.now()}@test.example`, { address, userAgent: null })).rejects.toMatchObject({ status: 429 });
  });
});
