// The project's own PostgreSQL cluster on loopback: find or install Debian's binaries,
// create a cluster in a git-ignored folder, start and stop it idempotently, and create the
// two database roles (an owner that migrations run as, and an application role that owns
// nothing and cannot bypass row-level security).
//
// Usage: node db/scripts/postgres.mjs start|stop|status|destroy
// Plain JavaScript so that it runs before `npm ci`.
import { existsSync, mkdirSync, readFileSync, rmSync, readdirSync, chownSync } from 'node:fs';
import { spawnSync } from 'node:child_process';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { ensureDebianPackages, step } from '../../scripts/lib/system.mjs';

const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '../..');
const isRoot = typeof process.getuid === 'function' && process.getuid() === 0;

/**
 * Settings for one cluster. The defaults are the local development cluster; the test
 * command passes its own port and folder so that tests never touch development data.
 */
export function clusterSettings(overrides = {}) {
  const env = process.env;
  const dataRoot = overrides.dataRoot ?? path.join(root, '.data');
  return {
    port: Number(overrides.port ?? env.CROSSGRAIN_DB_PORT ?? 54329),
    dataDir: overrides.dataDir ?? path.join(dataRoot, 'postgres'),
    socketDir: overrides.socketDir ?? path.join(dataRoot, 'postgres-socket'),
    logFile: overrides.logFile ?? path.join(dataRoot, 'postgres.log'),
    database: overrides.database ?? env.CROSSGRAIN_DB_NAME ?? 'crossgrain',
    ownerUser: env.CROSSGRAIN_DB_OWNER_USER ?? 'crossgrain_owner',
    ownerPassword: env.CROSSGRAIN_DB_OWNER_PASSWORD ?? 'crossgrain-owner-local',
    appUser: env.CROSSGRAIN_DB_APP_USER ?? 'crossgrain_app',
    appPassword: env.CROSSGRAIN_DB_APP_PASSWORD ?? 'crossgrain-app-local',
  };
}

/** Finds the newest /usr/lib/postgresql/<version>/bin, installing Debian's package if absent. */
export function postgresBinaries() {
  const base = '/usr/lib/postgresql';
  const find = () => {
    if (!existsSync(base)) return null;
    const versions = readdirSync(base)
      .filter((v) => existsSync(path.join(base, v, 'bin', 'pg_ctl')))
      .sort((a, b) => Number(b) - Number(a));
    return versions.length ? path.join(base, versions[0], 'bin') : null;
  };
  let bin = find();
  if (!bin) {
    ensureDebianPackages({ postgresql: '/usr/lib/postgresql/*/bin/pg_ctl' });
    bin = find();
  }
  if (!bin) throw new Error('PostgreSQL binaries not found under /usr/lib/postgresql after installing.');
  return bin;
}

/** Runs a PostgreSQL program as the postgres system user when we are root. */
function pgRun(bin, program, args, options = {}) {
  const full = path.join(bin, program);
  const command = isRoot ? 'runuser' : full;
  const finalArgs = isRoot ? ['-u', 'postgres', '--', full, ...args] : args;
  return spawnSync(command, finalArgs, { encoding: 'utf8', ...options });
}

function ensureOwnedByPostgres(dir) {
  mkdirSync(dir, { recursive: true });
  if (!isRoot) return;
  const ids = spawnSync('id', ['-u', 'postgres'], { encoding: 'utf8' });
  const gid = spawnSync('id', ['-g', 'postgres'], { encoding: 'utf8' });
  chownSync(dir, Number(ids.stdout.trim()), Number(gid.stdout.trim()));
}

/** True when a postmaster answers on the cluster's socket. */
function isRunning(bin, settings) {
  const result = pgRun(bin, 'pg_isready', ['-q', '-h', settings.socketDir, '-p', String(settings.port)]);
  return result.status === 0;
}

/** Removes a postmaster.pid left by a crashed server whose process is gone. */
function clearStalePid(settings) {
  const pidFile = path.join(settings.dataDir, 'postmaster.pid');
  if (!existsSync(pidFile)) return;
  const pid = Number(readFileSync(pidFile, 'utf8').split('\n')[0]);
  let alive = false;
  try {
    process.kill(pid, 0);
    alive = true;
  } catch {
    alive = false;
  }
  if (!alive) {
    step(`Removing a stale PostgreSQL pid file (process ${pid} is gone)`);
    rmSync(pidFile);
  }
}

function psql(bin, settings, sql, database = 'postgres') {
  const result = pgRun(bin, 'psql', [
    '-X', '-q', '-v', 'ON_ERROR_STOP=1', '-h', settings.socketDir, '-p', String(settings.port),
    '-U', 'postgres', '-d', database, '-c', sql,
  ]);
  if (result.status !== 0) throw new Error(`psql failed: ${result.stderr}`);
  return result.stdout;
}

const quoteLiteral = (value) => `'${String(value).replace(/'/g, "''")}'`;

/** Creates the owner and application roles and the database, each only if missing. */
function ensureRolesAndDatabase(bin, settings) {
  const { ownerUser, ownerPassword, appUser, appPassword, database } = settings;
  // The owner role runs migrations and owns every table. BYPASSRLS lets the few
  // SECURITY DEFINER functions it owns (membership look-ups used inside policies) read
  // the membership table without recursing into its own policy. The application role
  // is deliberately the opposite: no superuser, no BYPASSRLS, owns nothing.
  psql(bin, settings, `
    DO $$ BEGIN
      IF NOT EXISTS (SELECT 1 FROM pg_roles WHERE rolname = ${quoteLiteral(ownerUser)}) THEN
        CREATE ROLE ${ownerUser} LOGIN NOSUPERUSER NOCREATEDB NOCREATEROLE BYPASSRLS PASSWORD ${quoteLiteral(ownerPassword)};
      END IF;
      IF NOT EXISTS (SELECT 1 FROM pg_roles WHERE rolname = ${quoteLiteral(appUser)}) THEN
        CREATE ROLE ${appUser} LOGIN NOSUPERUSER NOCREATEDB NOCREATEROLE NOBYPASSRLS NOINHERIT PASSWORD ${quoteLiteral(appPassword)};
      END IF;
    END $$;`);
  const exists = psql(bin, settings, `SELECT 1 FROM pg_database WHERE datname = ${quoteLiteral(database)}`);
  if (!exists.includes('1')) {
    psql(bin, settings, `CREATE DATABASE ${database} OWNER ${ownerUser}`);
  }
  psql(bin, settings, `
    REVOKE ALL ON DATABASE ${database} FROM PUBLIC;
    GRANT CONNECT, TEMPORARY ON DATABASE ${database} TO ${appUser};
    GRANT CONNECT ON DATABASE ${database} TO ${ownerUser};
    ALTER SCHEMA public OWNER TO ${ownerUser};
    REVOKE ALL ON SCHEMA public FROM PUBLIC;
    GRANT USAGE ON SCHEMA public TO ${appUser};`, database);
}

/**
 * Creates the cluster if needed and starts it; a second call while it runs is a no-op.
 * Returns the settings and whether this call started the server (callers that clean up
 * must only stop what they started).
 */
export function startCluster(overrides = {}) {
  const settings = clusterSettings(overrides);
  const bin = postgresBinaries();
  ensureOwnedByPostgres(path.dirname(settings.dataDir));
  ensureOwnedByPostgres(settings.socketDir);
  if (!existsSync(path.join(settings.dataDir, 'PG_VERSION'))) {
    step(`Creating a PostgreSQL cluster in ${path.relative(root, settings.dataDir) || settings.dataDir}`);
    ensureOwnedByPostgres(settings.dataDir);
    const init = pgRun(bin, 'initdb', [
      '-D', settings.dataDir, '-U', 'postgres', '--auth-local=peer', '--auth-host=scram-sha-256',
      '-E', 'UTF8', '--locale=C.UTF-8', '--no-instructions',
    ]);
    if (init.status !== 0) throw new Error(`initdb failed: ${init.stderr}`);
  }
  const alreadyRunning = isRunning(bin, settings);
  if (alreadyRunning) {
    step(`PostgreSQL already running on 127.0.0.1:${settings.port}`);
  } else {
    clearStalePid(settings);
    step(`Starting PostgreSQL on 127.0.0.1:${settings.port}`);
    const options = [
      `-p ${settings.port}`, `-k ${settings.socketDir}`, '-c listen_addresses=127.0.0.1',
      '-c max_connections=100', '-c shared_buffers=256MB', '-c fsync=on',
    ].join(' ');
    ensureOwnedByPostgres(path.dirname(settings.logFile));
    const start = pgRun(bin, 'pg_ctl', ['-D', settings.dataDir, '-l', settings.logFile, '-w', '-t', '60', 'start', '-o', options]);
    if (start.status !== 0) {
      throw new Error(`PostgreSQL did not start: ${start.stderr || start.stdout}\nSee ${settings.logFile}`);
    }
  }
  ensureRolesAndDatabase(bin, settings);
  return { ...settings, startedHere: !alreadyRunning };
}

/**
 * Stops the cluster if it runs; a no-op otherwise. `mode` is pg_ctl's shutdown mode:
 * `fast` (the default) ends sessions cleanly; `immediate` is an abrupt stop, as a crash
 * or a lost database host looks to the app (the outage test uses it).
 */
export function stopCluster(overrides = {}, { mode = 'fast' } = {}) {
  const settings = clusterSettings(overrides);
  if (!existsSync(path.join(settings.dataDir, 'PG_VERSION'))) return;
  const bin = postgresBinaries();
  if (!isRunning(bin, settings)) return;
  step(`Stopping PostgreSQL${mode === 'fast' ? '' : ` (${mode})`}`);
  pgRun(bin, 'pg_ctl', ['-D', settings.dataDir, '-m', mode, '-w', 'stop']);
}

/**
 * Runs a PostgreSQL client program (pg_dump, pg_restore, psql) against the cluster as its
 * superuser, over the cluster's socket. `options` go to spawnSync (stdio for streaming a
 * dump to or from a file). Returns spawnSync's result.
 */
export function runClusterTool(program, args, options = {}, overrides = {}) {
  const settings = clusterSettings(overrides);
  return pgRun(postgresBinaries(), program, ['-h', settings.socketDir, '-p', String(settings.port), '-U', 'postgres', ...args], options);
}

/** Stops the cluster and removes its folder (the test command's throwaway cluster). */
export function destroyCluster(overrides = {}) {
  stopCluster(overrides);
  const settings = clusterSettings(overrides);
  rmSync(settings.dataDir, { recursive: true, force: true });
  rmSync(settings.socketDir, { recursive: true, force: true });
}

if (process.argv[1] && fileURLToPath(import.meta.url) === path.resolve(process.argv[1])) {
  const command = process.argv[2];
  if (command === 'start') startCluster();
  else if (command === 'stop') stopCluster();
  else if (command === 'status') {
    const settings = clusterSettings();
    const up = isRunning(postgresBinaries(), settings);
    console.log(up ? `running on 127.0.0.1:${settings.port}` : 'stopped');
  } else if (command === 'destroy') destroyCluster();
  else {
    console.error('usage: node db/scripts/postgres.mjs start|stop|status|destroy');
    process.exit(2);
  }
}
