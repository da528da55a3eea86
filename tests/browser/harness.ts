/**
 * The test harness for HTTP and browser tests: the built server (dist/) on the test port
 * against the throwaway cluster, the local mail server on the test SMTP port, and Debian's
 * Chromium driven by playwright-core. Each test file starts what it needs and closes it.
 */
import { spawn, type ChildProcess } from 'node:child_process';
import { mkdirSync, openSync, writeSync } from 'node:fs';
import path from 'node:path';
import { chromium, type Browser, type BrowserContext, type Page } from 'playwright-core';
import { startMailServer, type MailServerHandle } from '@/lib/server/mailServer';

const root = path.resolve(import.meta.dirname, '../..');
export const appUrl = process.env.CROSSGRAIN_TEST_APP_URL ?? 'http://127.0.0.1:4329';
const artifacts = process.env.CROSSGRAIN_ARTIFACTS_DIR ?? path.join(root, '.test-artifacts');
const screenshotDir = path.join(artifacts, 'screenshots');
export const mailDir = path.join(process.env.CROSSGRAIN_DATA_DIR ?? path.join(root, '.data', 'test'), 'mail');

/** Flags for a root, offline, headless Chromium (see the machine notes in stack.md). */
const CHROMIUM_FLAGS = [
  '--headless=new', '--no-sandbox', '--disable-gpu', '--disable-quic', '--no-first-run',
  '--disable-background-networking', '--disable-component-update', '--disable-sync',
  '--disable-dev-shm-usage',
];

async function waitForHealth(deadlineMs: number): Promise<void> {
  const until = Date.now() + deadlineMs;
  let lastError: unknown;
  while (Date.now() < until) {
    try {
      const response = await fetch(`${appUrl}/api/health`);
      if (response.ok) return;
      lastError = new Error(`health answered ${response.status}`);
    } catch (error) {
      lastError = error;
    }
    await new Promise((resolve) => setTimeout(resolve, 150));
  }
  throw new Error(`The test server did not become healthy: ${String(lastError)}`);
}

export interface ServerHandle {
  server: ChildProcess;
  mail: MailServerHandle;
  close: () => Promise<void>;
}

/** Starts a job worker process (npm run worker); kill it with `stop`. */
export function startWorker(): { child: ChildProcess; stop: () => Promise<void> } {
  const child = spawn('npx', ['tsx', path.join(root, 'src/features/runs/runWorker.ts')], {
    cwd: root,
    env: process.env,
    stdio: 'ignore',
    detached: true,
  });
  return {
    child,
    stop: async () => {
      if (child.exitCode !== null || !child.pid) return;
      const exited = new Promise((resolve) => child.once('exit', resolve));
      process.kill(-child.pid, 'SIGTERM');
      await exited;
    },
  };
}

/** Starts the built server and the local mail server. */
export async function startServer(): Promise<ServerHandle> {
  const url = new URL(appUrl);
  const mail = await startMailServer({ port: Number(process.env.CROSSGRAIN_SMTP_PORT ?? 2529), dir: mailDir });
  mkdirSync(artifacts, { recursive: true });
  const log = openSync(path.join(artifacts, 'test-server.log'), 'a');
  const server = spawn(process.execPath, [path.join(root, 'scripts/serve.mjs')], {
    cwd: root,
    env: { ...process.env, HOST: url.hostname, PORT: url.port, LOG_LEVEL: 'warn', NODE_ENV: 'production', CROSSGRAIN_APP_PROCESSES: '1' },
    stdio: ['ignore', log, 'pipe'],
  });
  // The server's error output goes to the log beside its other output (and into the error
  // should it not start), so that a failure later in a test leaves its stack behind.
  let serverErrors = '';
  server.stderr?.on('data', (chunk: Buffer) => {
    serverErrors += chunk.toString('utf8');
    writeSync(log, chunk);
  });
  try {
    await waitForHealth(20_000);
  } catch (error) {
    server.kill('SIGKILL');
    await mail.close();
    throw new Error(`${String(error)}\n${serverErrors}`);
  }
  return {
    server,
    mail,
    close: async () => {
      const exited = new Promise((resolve) => server.once('exit', resolve));
      server.kill('SIGTERM');
      await exited;
      await mail.close();
    },
  };
}

export interface Harness extends ServerHandle {
  browser: Browser;
  /** A fresh browser context (its own cookies) with console errors collected. */
  newPage: () => Promise<{ page: Page; context: BrowserContext; consoleErrors: string[] }>;
}

/** Starts the servers and a headless browser. */
export async function startHarness(): Promise<Harness> {
  const servers = await startServer();
  const browser = await chromium.launch({ executablePath: '/usr/bin/chromium', args: CHROMIUM_FLAGS });
  return {
    ...servers,
    browser,
    newPage: async () => {
      const context = await browser.newContext({ baseURL: appUrl, viewport: { width: 1360, height: 900 } });
      const page = await context.newPage();
      const consoleErrors: string[] = [];
      page.on('console', (message) => {
        if (message.type() === 'error') consoleErrors.push(message.text());
      });
      page.on('pageerror', (error) => consoleErrors.push(error.message));
      return { page, context, consoleErrors };
    },
    close: async () => {
      await browser.close();
      await servers.close();
    },
  };
}

/** Saves a full-page screenshot under .test-artifacts/screenshots (git-ignored). */
export async function saveScreenshot(page: Page, name: string): Promise<string> {
  mkdirSync(screenshotDir, { recursive: true });
  const file = path.join(screenshotDir, `${name}.png`);
  await page.screenshot({ path: file, fullPage: true });
  return file;
}

/** Signs in through the real sign-in page and waits to leave it. */
export async function signInThroughPage(page: Page, email: string, password: string): Promise<void> {
  await page.goto('/sign-in');
  await page.getByLabel('E-mail address').fill(email);
  await page.getByLabel('Password').fill(password);
  await page.getByRole('button', { name: 'Sign in' }).click();
  await page.waitForURL((url) => url.pathname !== '/sign-in');
}

/**
 * Waits until the island inside `container` has hydrated (it marks itself with
 * data-hydrated="true"; see src/lib/client/useHydrated.ts). Input given before that
 * would land in the server's HTML, not in the island's state.
 */
export async function waitForHydrated(page: Page, testId: string): Promise<void> {
  await page.locator(`[data-testid="${testId}"][data-hydrated="true"]`).waitFor();
}
