// Keeps a long-running child process alive: when it ends without being asked to, the
// supervisor says why (exit code or signal) and starts it again after a delay that
// doubles while it keeps failing quickly (1 s, 2 s, 4 s ... up to 30 s) and returns to
// the first delay once a start has lived for a minute. Plain JavaScript (runs before
// `npm ci`).

/**
 * @param {object} options
 * @param {string} options.name what the process is, for the log ("app", "worker")
 * @param {() => import('node:child_process').ChildProcess} options.start starts one copy
 * @param {(message: string) => void} [options.log] where to say what happens
 * @param {(child: import('node:child_process').ChildProcess) => void} [options.onStart] after each start (pid files)
 * @param {(child: import('node:child_process').ChildProcess, signal: NodeJS.Signals) => void} [options.kill] how to stop one copy
 * @param {{ initialMs?: number, maxMs?: number, healthyAfterMs?: number }} [options.backoff]
 */
export function supervise({ name, start, log = console.log, onStart = () => {}, kill = (child, signal) => child.kill(signal), backoff = {} }) {
  const initialMs = backoff.initialMs ?? 1_000;
  const maxMs = backoff.maxMs ?? 30_000;
  const healthyAfterMs = backoff.healthyAfterMs ?? 60_000;
  let delayMs = initialMs;
  let stopping = false;
  let restartTimer = null;
  let child = null;
  let startedAt = 0;
  const restarts = [];

  const launch = () => {
    restartTimer = null;
    if (stopping) return;
    startedAt = Date.now();
    child = start();
    onStart(child);
    const current = child;
    current.once('exit', (code, signal) => {
      if (stopping || current !== child) return;
      const lived = Date.now() - startedAt;
      if (lived >= healthyAfterMs) delayMs = initialMs;
      const why = signal ? `signal ${signal}` : `exit code ${code}`;
      log(`The ${name} process ended (${why}) after ${(lived / 1000).toFixed(1)} s; starting it again in ${(delayMs / 1000).toFixed(1)} s`);
      restarts.push({ at: Date.now(), why, delayMs });
      restartTimer = setTimeout(launch, delayMs);
      delayMs = Math.min(maxMs, delayMs * 2);
    });
  };
  launch();

  return {
    get child() {
      return child;
    },
    /** Each unplanned end: when, why, and the delay before the next start. */
    restarts,
    /** Stops supervising and ends the current copy (TERM, then KILL after `graceMs`). */
    stop: async (graceMs = 3_000) => {
      stopping = true;
      if (restartTimer) clearTimeout(restartTimer);
      const current = child;
      if (!current || current.exitCode !== null || current.signalCode !== null) return;
      const exited = new Promise((resolve) => current.once('exit', resolve));
      kill(current, 'SIGTERM');
      const grace = setTimeout(() => kill(current, 'SIGKILL'), graceMs);
      await exited;
      clearTimeout(grace);
    },
  };
}
