/**
 * The start command's supervisor (scripts/lib/supervise.mjs): a child that ends on its
 * own is started again after a growing delay and the reason is logged; one that lives
 * is left alone; stopping ends it for good.
 */
import { spawn } from 'node:child_process';
import { mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { supervise } from '../../scripts/lib/supervise.mjs';

const sleep = (ms: number) => new Promise((resolve) => setTimeout(resolve, ms));

describe('the supervisor', () => {
  it('restarts a crashing child with a doubling delay, logs why, and stops it on request', async () => {
    const dir = mkdtempSync(path.join(os.tmpdir(), 'crossgrain-supervise-'));
    const counter = path.join(dir, 'starts');
    writeFileSync(counter, '0');
    // Crashes (exit code 3) on its first two starts, then stays up like a healthy server.
    const script = `const fs = require('fs'); const n = Number(fs.readFileSync(${JSON.stringify(counter)}, 'utf8')) + 1;
      fs.writeFileSync(${JSON.stringify(counter)}, String(n)); if (n <= 2) process.exit(3); setInterval(() => {}, 1000);`;
    const lines: string[] = [];
    const handle = supervise({
      name: 'app',
      start: () => spawn(process.execPath, ['-e', script], { stdio: 'ignore' }),
      log: (line: string) => lines.push(line),
      backoff: { initialMs: 100, maxMs: 1_000, healthyAfterMs: 60_000 },
    });
    const until = Date.now() + 10_000;
    while (readFileSync(counter, 'utf8') !== '3' && Date.now() < until) await sleep(50);
    await sleep(300);
    expect(readFileSync(counter, 'utf8')).toBe('3');
    expect(handle.restarts.map((r: { why: string; delayMs: number }) => [r.why, r.delayMs])).toEqual([['exit code 3', 100], ['exit code 3', 200]]);
    expect(lines).toHaveLength(2);
    expect(lines[0]).toMatch(/^The app process ended \(exit code 3\) after [\d.]+ s; starting it again in 0\.1 s$/);
    const living = handle.child;
    expect(living?.exitCode).toBeNull();

    await handle.stop(1_000);
    expect(living?.signalCode).toBe('SIGTERM');
    await sleep(400);
    expect(readFileSync(counter, 'utf8')).toBe('3'); // not started again after the stop
    expect(handle.restarts).toHaveLength(2);
  });

  it('says which signal ended a child that was killed from outside', async () => {
    const lines: string[] = [];
    const handle = supervise({
      name: 'worker',
      start: () => spawn(process.execPath, ['-e', 'setInterval(() => {}, 1000)'], { stdio: 'ignore' }),
      log: (line: string) => lines.push(line),
      backoff: { initialMs: 100 },
    });
    const first = handle.child;
    await sleep(200);
    first?.kill('SIGKILL');
    const until = Date.now() + 5_000;
    while (handle.child === first && Date.now() < until) await sleep(50);
    expect(lines[0]).toMatch(/^The worker process ended \(signal SIGKILL\)/);
    expect(handle.child).not.toBe(first);
    expect(handle.child?.exitCode).toBeNull();
    await handle.stop(1_000);
  });
});
