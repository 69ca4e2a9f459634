import { spawn, type ChildProcess } from 'node:child_process';
import { mkdirSync, mkdtempSync, rmSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { chromium, type BrowserContext, type Page } from 'playwright-core';
import { afterAll, beforeAll } from 'vitest';

export const SCREENSHOTS = path.resolve('test-output/screenshots');
export const CHROMIUM = process.env.CHROMIUM_PATH ?? '/usr/bin/chromium';

export type RunningServer = {
  url: string;
  dataDir: string;
  process: ChildProcess;
  output: () => string;
  /** Ends the server with a signal (SIGKILL: as a crash does) and waits for it; the data folder stays. */
  kill: (signal?: NodeJS.Signals) => Promise<void>;
  /** Stops the server and removes its data folder. */
  stop: () => Promise<void>;
};

/**
 * The node flags `npm start` gives the server (package.json): a larger young generation, so
 * that many small short-lived response objects are collected less often.
 */
const SERVER_FLAGS = ['--max-semi-space-size=32'];

/**
 * Starts the real server (production build, ephemeral port) and waits until it listens. The data
 * folder is a fresh one unless `dataDir` names one, so that a test can start again where a server
 * stopped. SERVER_NODE_ARGS adds node flags (e.g. --cpu-prof --cpu-prof-dir=DIR to profile it).
 */
export async function startServer(env: Record<string, string> = {}, options: { dataDir?: string } = {}): Promise<RunningServer> {
  const dataDir = options.dataDir ?? mkdtempSync(path.join(os.tmpdir(), 'plumbline-e2e-'));
  const child = spawn(process.execPath, [...SERVER_FLAGS, ...(process.env.SERVER_NODE_ARGS?.split(' ').filter(Boolean) ?? []), '--import', 'tsx', 'server/index.ts'], {
    env: { ...process.env, NODE_ENV: 'production', PORT: '0', PLUMBLINE_DATA_DIR: dataDir, ...env },
    stdio: ['ignore', 'pipe', 'pipe'],
  });
  let output = '';
  child.stdout!.on('data', (d) => (output += d));
  child.stderr!.on('data', (d) => (output += d));
  const url = await new Promise<string>((resolve, reject) => {
    const timer = setTimeout(() => reject(new Error(`server did not start in 60 s:\n${output}`)), 60_000);
    const check = () => {
      const m = output.match(/running at (http:\/\/localhost:\d+)/);
      if (m) {
        clearTimeout(timer);
        resolve(m[1]);
      }
    };
    child.stdout!.on('data', check);
    child.on('exit', (code) => reject(new Error(`server exited with ${code}:\n${output}`)));
  });
  return {
    url,
    dataDir,
    process: child,
    output: () => output,
    kill: (signal = 'SIGTERM') => ended(child, signal),
    stop: async () => {
      await ended(child, 'SIGTERM');
      rmSync(dataDir, { recursive: true, force: true });
    },
  };
}

async function ended(child: ChildProcess, signal: NodeJS.Signals) {
  if (child.exitCode !== null || child.signalCode !== null) return;
  const exited = new Promise((r) => child.once('exit', r));
  child.kill(signal);
  await exited;
}

export type Browser = { context: BrowserContext; page: Page; close: () => Promise<void> };

/** Debian's chromium, headless, with a fresh profile and no background traffic. */
export async function launchBrowser(): Promise<Browser> {
  const profile = mkdtempSync(path.join(os.tmpdir(), 'plumbline-chromium-'));
  const context = await chromium.launchPersistentContext(profile, {
    executablePath: CHROMIUM,
    headless: true,
    viewport: { width: 1400, height: 900 },
    args: ['--no-sandbox', '--disable-gpu', '--disable-quic', '--no-first-run', '--disable-background-networking', '--disable-component-update', '--disable-sync'],
  });
  const page = context.pages()[0] ?? (await context.newPage());
  return {
    context,
    page,
    close: async () => {
      await context.close();
      rmSync(profile, { recursive: true, force: true });
    },
  };
}

export async function screenshot(page: Page, name: string) {
  mkdirSync(SCREENSHOTS, { recursive: true });
  const file = path.join(SCREENSHOTS, `${name}.png`);
  await page.screenshot({ path: file, fullPage: true });
  return file;
}

export async function signIn(page: Page, url: string, email: string, password = 'lantern-demo-2026') {
  await page.goto(`${url}/sign-in`);
  await page.getByLabel(/e-mail/i).fill(email);
  await page.getByLabel(/password/i).fill(password);
  await page.getByRole('button', { name: /sign in/i }).click();
}

/**
 * One real server and one browser for a test file: started before its tests, stopped after.
 * Read `.server` and `.browser` inside the tests (they exist once beforeAll has run).
 */
export function serverAndBrowser(env: Record<string, string> = {}) {
  const held = {} as { server: RunningServer; browser: Browser };
  beforeAll(async () => {
    held.server = await startServer(env);
    held.browser = await launchBrowser();
  });
  afterAll(async () => {
    await held.browser?.close();
    await held.server?.stop();
  });
  return held;
}

/** An API call from the signed-in page (with its CSRF token), as the client makes it. */
export async function api(browser: Browser, method: string, path: string, body?: unknown) {
  return browser.page.evaluate(
    async ({ method, path, body }) => {
      const token = (await (await fetch('/api/auth/csrf')).json()).token;
      const res = await fetch(path, { method, headers: { 'content-type': 'application/json', 'x-csrf-token': token }, body: body === undefined ? undefined : JSON.stringify(body) });
      return { status: res.status, body: await res.json().catch(() => null) };
    },
    { method, path, body },
  );
}
