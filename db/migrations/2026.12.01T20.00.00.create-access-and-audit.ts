import type { Migration } from '../migrate';

/**
 * Sign-in support (single-use e-mail tokens, throttling, personal API tokens) and the
 * audit trail's core: an append-only, hash-chained event table.
 */
export const up: Migration = async ({ context }) => {
  await context.sql(`
    -- Invitation and password-reset links. Only the SHA-256 of the token is kept.
    CREATE TABLE auth_tokens (
      id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
      user_id uuid NOT NULL REFERENCES users(id) ON DELETE CASCADE,
      purpose text NOT NULL CHECK (purpose IN ('invitation', 'password-reset')),
      token_hash text NOT NULL UNIQUE,
      expires_at timestamptz NOT NULL,
      used_at timestamptz,
      created_by uuid REFERENCES users(id),
      created_at timestamptz NOT NULL DEFAULT now()
    );
    CREATE INDEX auth_tokens_user_idx ON auth_tokens (user_id, purpose);

    -- Sign-in attempts, kept in PostgreSQL so that throttling holds across app servers.
    -- The account is keyed by a hash of the e-mail typed, so attempts on addresses that
    -- have no account store no address.
    CREATE TABLE signin_attempts (
      id bigint GENERATED ALWAYS AS IDENTITY PRIMARY KEY,
      account_key text NOT NULL,
      client_address text NOT NULL,
      succeeded boolean NOT NULL,
      attempted_at timestamptz NOT NULL DEFAULT now()
    );
    -- Throttling counts recent failures per account and per address.
    CREATE INDEX signin_attempts_account_idx ON signin_attempts (account_key, attempted_at);
    CREATE INDEX signin_attempts_address_idx ON signin_attempts (client_address, attempted_at);

    -- Personal API tokens for scripts. Shown once; only the SHA-256 is kept.
    CREATE TABLE api_tokens (
      id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
      user_id uuid NOT NULL REFERENCES users(id) ON DELETE CASCADE,
      name text NOT NULL CHECK (length(name) BETWEEN 1 AND 80),
      token_hash text NOT NULL UNIQUE,
      prefix text NOT NULL,
      created_at timestamptz NOT NULL DEFAULT now(),
      last_used_at timestamptz,
      revoked_at timestamptz
    );
    CREATE INDEX api_tokens_user_idx ON api_tokens (user_id);

    -- The audit trail. Rows are linked in a hash chain (Schneier and Kelsey 1999): each
    -- stores the previous row's hash and the SHA-256 of its own canonical serialisation,
    -- so any change to a stored row breaks the chain at that row.
    CREATE TABLE audit_events (
      id bigint GENERATED ALWAYS AS IDENTITY PRIMARY KEY,
      chain_position bigint NOT NULL UNIQUE,
      occurred_at timestamptz NOT NULL,
      actor_id uuid REFERENCES users(id),
      actor_role text,
      action text NOT NULL CHECK (action ~ '^[a-z][a-z-]*(\\.[a-z][a-z-]*)+$'),
      subject_type text,
      subject_id text,
      initiative_id uuid REFERENCES initiatives(id),
      client_address text,
      details jsonb NOT NULL DEFAULT '{}'::jsonb,
      prev_hash text NOT NULL,
      hash text NOT NULL
    );
    -- Auditors filter by initiative and time; the trail page lists newest first.
    CREATE INDEX audit_events_initiative_idx ON audit_events (initiative_id, chain_position DESC);
    CREATE INDEX audit_events_actor_idx ON audit_events (actor_id, chain_position DESC);
  `);
  await context.applyPolicyFile('002_access_and_audit.sql');
};

export const down: Migration = async ({ context }) => {
  await context.sql(`
    DROP FUNCTION IF EXISTS app_verify_audit_chain();
    DROP TRIGGER IF EXISTS audit_events_link ON audit_events;
    DROP FUNCTION IF EXISTS app_audit_canonical(audit_events);
    DROP TABLE IF EXISTS audit_events;
    DROP FUNCTION IF EXISTS audit_events_link();
    DROP FUNCTION IF EXISTS audit_events_refuse_change();
    DROP FUNCTION IF EXISTS app_auditor_initiative_ids();
    DROP TABLE IF EXISTS api_tokens;
    DROP TABLE IF EXISTS signin_attempts;
    DROP TABLE IF EXISTS auth_tokens;
  `);
};
