import type { Migration } from '../migrate';

/**
 * Read-only functions for checkpoints of the audit chain's head (export one, check the
 * chain against one later); see policies/rls/005_audit_checkpoints.sql.
 */
export const up: Migration = async ({ context }) => {
  await context.applyPolicyFile('005_audit_checkpoints.sql');
};

export const down: Migration = async ({ context }) => {
  await context.sql(`
    DROP FUNCTION IF EXISTS app_audit_chain_link(bigint);
    DROP FUNCTION IF EXISTS app_audit_chain_head();
  `);
};
