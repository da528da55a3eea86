/**
 * The browser-test harness: the built server (dist/) on the test port against the
 * throwaway cluster, and Debian's Chromium driven by playwright-core. Each test file
 * starts one server and one browser and closes both when it ends.
 */
import { spawn, type ChildProcess } from 'node:child_process';
import { mkdirSync } from 'node:fs';
import path from 'node:path';
import { chromium, type Browser, type BrowserContext, type Page } from 'playwright-core';

const root = path.resolve(import.meta.dirname, '../..');
export const appUrl = process.env.CROSSGRAIN_TEST_APP_URL ?? 'http://127.0.0.1:4329';
const screenshotDir = path.join(process.env.CROSSGRAIN_ARTIFACTS_DIR ?? path.join(root, '.test-artifacts'), 'screenshots');

/** Flags for a root, offline, headless Chromium (see the machine notes in stack.md). */
const CHROMIUM_FLAGS = [
  '--headless=new', '--no-sandbox', '--disable-gpu', '--disable-quic', '--no-first-run',
  '--disable-background-networking', '--disable-component-update', '--disable-sync',
  '--disable-dev-shm-usage',
];

export interface Harness {
  browser: Browser;
  server: ChildProcess;
  /** A fresh browser context (its own cookies) with console errors collected. */
  newPage: () => Promise<{ page: Page; context: BrowserContext; consoleErrors: string[] }>;
  close: () => Promise<void>;
}

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

/** Starts the built server and a headless browser. */
export async function startHarness(): Promise<Harness> {
  const url = new URL(appUrl);
  const server = spawn(process.execPath, [path.join(root, 'dist/server/entry.mjs')], {
    cwd: root,
    env: { ...process.env, HOST: url.hostname, PORT: url.port },
    stdio: ['ignore', 'ignore', 'pipe'],
  });
  let serverErrors = '';
  server.stderr?.on('data', (chunk: Buffer) => {
    serverErrors += chunk.toString('utf8');
  });
  try {
    await waitForHealth(20_000);
  } catch (error) {
    server.kill('SIGKILL');
    throw new Error(`${String(error)}\n${serverErrors}`);
  }
  const browser = await chromium.launch({ executablePath: '/usr/bin/chromium', args: CHROMIUM_FLAGS });
  return {
    browser,
    server,
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
      server.kill('SIGTERM');
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
