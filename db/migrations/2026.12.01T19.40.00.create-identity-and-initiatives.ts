import type { Migration } from '../migrate';

/**
 * Users, sessions, initiatives and memberships, the helper functions that row-level
 * security policies use to learn who is asking, and the first policies.
 */
export const up: Migration = async ({ context }) => {
  await context.sql(`
    CREATE TABLE users (
      id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
      email text NOT NULL UNIQUE CHECK (email = lower(email)),
      display_name text NOT NULL,
      password_hash text,
      status text NOT NULL DEFAULT 'invited' CHECK (status IN ('invited', 'active', 'deactivated')),
      is_admin boolean NOT NULL DEFAULT false,
      is_demo boolean NOT NULL DEFAULT false,
      last_sign_in_at timestamptz,
      created_at timestamptz NOT NULL DEFAULT now(),
      updated_at timestamptz NOT NULL DEFAULT now()
    );

    -- Sessions as the session library expects them; the id is the SHA-256 of the cookie's
    -- token, so a copy of this table cannot be replayed as cookies.
    CREATE TABLE sessions (
      id text PRIMARY KEY,
      user_id uuid NOT NULL REFERENCES users(id) ON DELETE CASCADE,
      expires_at timestamptz NOT NULL,
      created_at timestamptz NOT NULL DEFAULT now(),
      last_seen_at timestamptz NOT NULL DEFAULT now(),
      client_address text,
      user_agent text
    );
    -- Ending all of one user's sessions (sign-out everywhere, deactivation) looks up by user.
    CREATE INDEX sessions_user_id_idx ON sessions (user_id);

    CREATE TABLE initiatives (
      id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
      name text NOT NULL,
      slug text NOT NULL UNIQUE CHECK (slug ~ '^[a-z0-9]+(-[a-z0-9]+)*$'),
      organisation text NOT NULL,
      description text NOT NULL DEFAULT '',
      readers_see_rows boolean NOT NULL DEFAULT false,
      archived_at timestamptz,
      created_at timestamptz NOT NULL DEFAULT now(),
      updated_at timestamptz NOT NULL DEFAULT now()
    );

    CREATE TABLE memberships (
      id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
      initiative_id uuid NOT NULL REFERENCES initiatives(id) ON DELETE CASCADE,
      user_id uuid NOT NULL REFERENCES users(id) ON DELETE CASCADE,
      role text NOT NULL CHECK (role IN ('analyst', 'clinician', 'auditor')),
      created_at timestamptz NOT NULL DEFAULT now(),
      updated_at timestamptz NOT NULL DEFAULT now(),
      UNIQUE (initiative_id, user_id)
    );
    -- Policies ask "which initiatives is this user in?" on every query.
    CREATE INDEX memberships_user_id_idx ON memberships (user_id, initiative_id);
  `);
  await context.applyPolicyFile('001_identity.sql');
};

export const down: Migration = async ({ context }) => {
  await context.sql(`
    DROP TABLE IF EXISTS memberships;
    DROP TABLE IF EXISTS initiatives;
    DROP TABLE IF EXISTS sessions;
    DROP TABLE IF EXISTS users;
    DROP FUNCTION IF EXISTS app_current_user_id();
    DROP FUNCTION IF EXISTS app_member_initiative_ids();
    DROP FUNCTION IF EXISTS app_current_user_is_admin();
  `);
};
