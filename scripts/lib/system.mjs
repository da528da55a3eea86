// Helpers shared by the start and test commands: progress lines, running programs,
// and installing Debian packages that a fresh machine lacks. Plain JavaScript so that it
// runs before `npm ci` has installed anything.
import { spawn, spawnSync } from 'node:child_process';
import { existsSync } from 'node:fs';

const started = Date.now();

/** Prints one progress line with the seconds since the command began. */
export function step(message) {
  const seconds = ((Date.now() - started) / 1000).toFixed(1).padStart(5);
  process.stdout.write(`[crossgrain ${seconds}s] ${message}\n`);
}

/** Runs a program to completion, inheriting output; throws on a non-zero exit. */
export function run(command, args, options = {}) {
  const result = spawnSync(command, args, { stdio: 'inherit', ...options });
  if (result.error) throw result.error;
  if (result.status !== 0) {
    throw new Error(`${command} ${args.join(' ')} exited with ${result.status}`);
  }
  return result;
}

/** Runs a program and returns its standard output as text (throws on failure). */
export function capture(command, args, options = {}) {
  const result = spawnSync(command, args, { encoding: 'utf8', ...options });
  if (result.error) throw result.error;
  if (result.status !== 0) {
    throw new Error(`${command} ${args.join(' ')} exited with ${result.status}: ${result.stderr}`);
  }
  return result.stdout;
}

/** Starts a long-running child process whose output is prefixed with a tag. */
export function startChild(tag, command, args, options = {}) {
  // Each child leads its own process group, so that it and everything it starts (npx,
  // tsx, worker threads) can be stopped together, also by a later start after a crash.
  const child = spawn(command, args, { stdio: ['ignore', 'pipe', 'pipe'], detached: true, ...options });
  const prefix = (stream, out) => {
    let pending = '';
    stream.on('data', (chunk) => {
      pending += chunk.toString('utf8');
      const lines = pending.split('\n');
      pending = lines.pop() ?? '';
      for (const line of lines) out.write(`[${tag}] ${line}\n`);
    });
  };
  prefix(child.stdout, process.stdout);
  prefix(child.stderr, process.stderr);
  return child;
}

/** Sends a signal to a child's whole process group; false when it is already gone. */
export function signalGroup(pid, signal) {
  try {
    process.kill(-pid, signal);
    return true;
  } catch {
    return false;
  }
}

const isRoot = typeof process.getuid === 'function' && process.getuid() === 0;
let aptUpdated = false;

/**
 * Installs Debian packages whose marker file is missing. `wanted` maps a package name to
 * a path that exists once it is installed. Needs root (or passwordless sudo).
 */
export function ensureDebianPackages(wanted) {
  const missing = Object.entries(wanted)
    .filter(([, marker]) => !markerPresent(marker))
    .map(([name]) => name);
  if (missing.length === 0) return;
  if (!isRoot && spawnSync('sudo', ['-n', 'true']).status !== 0) {
    throw new Error(
      `Missing Debian packages: ${missing.join(', ')}. Install them with ` +
        `"sudo apt-get install ${missing.join(' ')}" and run the command again.`,
    );
  }
  const aptGet = (args) =>
    isRoot
      ? run('apt-get', args, { env: { ...process.env, DEBIAN_FRONTEND: 'noninteractive' } })
      : run('sudo', ['-n', 'env', 'DEBIAN_FRONTEND=noninteractive', 'apt-get', ...args]);
  if (!aptUpdated) {
    step('Updating the Debian package lists (apt-get update)');
    aptGet(['update', '-qq']);
    aptUpdated = true;
  }
  step(`Installing Debian packages: ${missing.join(', ')} (this can take a few minutes)`);
  aptGet(['install', '-y', '-qq', '--no-install-recommends', ...missing]);
}

function markerPresent(marker) {
  if (marker.includes('*')) {
    const out = spawnSync('bash', ['-c', `compgen -G '${marker}'`], { encoding: 'utf8' });
    return out.status === 0 && out.stdout.trim().length > 0;
  }
  return existsSync(marker);
}

/** Runs `npm ci` when node_modules is missing or older than the lock file. */
export function ensureNodeModules(root) {
  const stamp = `${root}/node_modules/.package-lock.json`;
  if (existsSync(stamp)) {
    const lock = spawnSync('bash', ['-c', `[ "${root}/package-lock.json" -nt "${stamp}" ]`]);
    if (lock.status !== 0) return;
  }
  step('Installing npm packages (npm ci)');
  run('npm', ['ci', '--no-audit', '--no-fund'], { cwd: root });
}
