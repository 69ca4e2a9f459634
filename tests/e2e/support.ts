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

/** One axe-core finding, reduced to what a person needs to find and fix it. */
export type AxeViolation = { id: string; impact: string | null; help: string; helpUrl: string; targets: string[]; summary: string };

/**
 * Runs axe-core (the devDependency) on the whole document and returns its violations. The product's
 * Content-Security-Policy refuses inline script tags, so the source is evaluated through the
 * browser's debugging protocol instead of `addScriptTag`.
 */
export async function axeViolations(page: Page): Promise<AxeViolation[]> {
  if (!(await page.evaluate(() => 'axe' in window))) {
    const axe = (await import('axe-core')).default;
    await page.evaluate(axe.source);
  }
  return page.evaluate(async () => {
    const run = (window as unknown as { axe: typeof import('axe-core') }).axe.run;
    const results = await run(document, { resultTypes: ['violations'] });
    return results.violations.map((v) => ({
      id: v.id,
      impact: v.impact ?? null,
      help: v.help,
      helpUrl: v.helpUrl,
      targets: v.nodes.map((n) => n.target.map(String).join(' ')),
      summary: (v.nodes[0]?.failureSummary ?? '').replace(/\s+/g, ' ').trim(),
    }));
  });
}

/**
 * Fails when axe-core finds a serious or critical violation on the page as it is now, with a
 * list a person can act on: the rule, its impact, what it asks for, and where (the first few elements).
 */
export async function checkAccessibility(page: Page, screenName: string) {
  const serious = (await axeViolations(page)).filter((v) => v.impact === 'serious' || v.impact === 'critical');
  if (serious.length === 0) return;
  const lines = serious.map((v) => {
    const more = v.targets.length > 3 ? ` (+${v.targets.length - 3} more)` : '';
    return `- ${v.id} [${v.impact}]: ${v.help}\n    at ${v.targets.slice(0, 3).join(' | ')}${more}\n    ${v.summary.slice(0, 300)}`;
  });
  throw new Error(`${screenName}: ${serious.length} serious or critical accessibility violation(s):\n${lines.join('\n')}`);
}

export type KeyboardReport = {
  /** The controls in the order Tab reached them. */
  order: string[];
  /** Visible, enabled controls that Tab never reached (a radio group counts once). */
  unreachable: string[];
  /** Elements with a positive tabindex, which reorders the page's tab sequence. */
  positiveTabindex: string[];
  /**
   * Elements with a click handler that the keyboard cannot reach: not a control, not inside a
   * focusable widget with a role, and holding no link or button that offers the same action.
   */
  clickableWithoutKeyboard: string[];
};

/**
 * Tabs through the whole page from the top, as a keyboard user would, and compares what receives
 * focus with every visible, enabled control (links, buttons, fields, summaries, anything with a
 * tabindex ≥ 0 or a widget role). Also finds positive tabindex values, and elements that React
 * gave a click handler although the keyboard cannot reach or activate them.
 */
export async function keyboardReach(page: Page, maxTabs = 1500): Promise<KeyboardReport> {
  const setup = await page.evaluate(() => {
    const describe = (el: Element) => {
      const name = (el.getAttribute('aria-label') ?? (el as HTMLInputElement).labels?.[0]?.textContent ?? el.textContent ?? el.getAttribute('name') ?? '').replace(/\s+/g, ' ').trim().slice(0, 50);
      const type = el.getAttribute('type') ? `[type=${el.getAttribute('type')}]` : '';
      const role = el.getAttribute('role') ? `[role=${el.getAttribute('role')}]` : '';
      return `<${el.tagName.toLowerCase()}${type}${role}> “${name}”`;
    };
    // checkVisibility also hides what a closed <details> holds (content-visibility), which has a box.
    const visible = (el: Element) => {
      if (el.closest('[inert], [aria-hidden="true"]')) return false;
      const r = el.getBoundingClientRect();
      return r.width > 0 && r.height > 0 && el.checkVisibility({ visibilityProperty: true, contentVisibilityAuto: true });
    };
    const controls =
      'a[href], button, input:not([type=hidden]), select, textarea, summary, [tabindex], [contenteditable=""], [contenteditable=true], ' +
      '[role=button], [role=link], [role=tab], [role=checkbox], [role=radio], [role=switch], [role=menuitem], [role=option], [role=slider], [role=combobox]';
    // tabindex="-1" takes a link, button or field out of the tab order: that counts as unreachable.
    // Other elements with it (a heading or <main> focused by script) are no controls.
    const nativeControl = (el: Element) => el.matches('a[href], button, input, select, textarea, summary');
    const candidates = [...document.querySelectorAll(controls)].filter(
      (el) => visible(el) && !(el as HTMLButtonElement).disabled && el.getAttribute('aria-disabled') !== 'true' && (nativeControl(el) || el.getAttribute('tabindex') !== '-1'),
    );
    // A radio group is one stop of the tab sequence: the arrow keys move within it.
    const radioGroups = new Map<string, string>();
    const expected: { key: string; label: string }[] = [];
    candidates.forEach((el, i) => {
      el.setAttribute('data-kbd', String(i));
      if (el instanceof HTMLInputElement && el.type === 'radio' && el.name) {
        const group = `radio:${el.form?.id ?? ''}:${el.name}`;
        el.setAttribute('data-kbd-group', group);
        if (!radioGroups.has(group)) {
          radioGroups.set(group, describe(el));
          expected.push({ key: group, label: `radio group “${el.name}”, e.g. ${describe(el)}` });
        }
      } else expected.push({ key: String(i), label: describe(el) });
    });
    const positiveTabindex = [...document.querySelectorAll('[tabindex]')].filter((el) => Number(el.getAttribute('tabindex')) > 0).map(describe);
    const native = new Set(['A', 'BUTTON', 'INPUT', 'SELECT', 'TEXTAREA', 'SUMMARY', 'LABEL', 'OPTION', 'DETAILS']);
    const clickableWithoutKeyboard = [...document.querySelectorAll('body *')]
      .filter((el) => {
        const key = Object.keys(el).find((k) => k.startsWith('__reactProps$'));
        if (!key) return false;
        const props = (el as unknown as Record<string, Record<string, unknown>>)[key];
        if (!props || !['onClick', 'onMouseDown', 'onPointerDown', 'onDoubleClick'].some((h) => typeof props[h] === 'function')) return false;
        if (native.has(el.tagName)) return false;
        // A focusable widget with a role handles its own keys; a clicked part of such a widget
        // (a row of a chart the arrow keys move through) is reached through it.
        if (el.closest('[role][tabindex]:not([tabindex="-1"])')) return false;
        // A clickable row is a pointer shortcut when the link or button it duplicates is inside it.
        return !el.querySelector('a[href], button:not([disabled])');
      })
      .filter(visible)
      .map(describe);
    const seen: string[] = [];
    const record = (e: FocusEvent) => {
      const el = e.target as Element;
      seen.push(el.getAttribute('data-kbd-group') ?? el.getAttribute('data-kbd') ?? `other:${describe(el)}`);
    };
    document.addEventListener('focusin', record);
    (window as unknown as { __kbd: { order: string[]; stop: () => void } }).__kbd = {
      order: seen,
      stop: () => {
        document.removeEventListener('focusin', record);
        for (const el of document.querySelectorAll('[data-kbd]')) el.removeAttribute('data-kbd'), el.removeAttribute('data-kbd-group');
      },
    };
    (document.activeElement as HTMLElement | null)?.blur?.();
    return { expected, positiveTabindex, clickableWithoutKeyboard };
  });
  // Tab in batches until the focus comes back round to the first control it reached.
  let order: string[] = [];
  for (let pressed = 0; pressed < maxTabs; ) {
    for (let i = 0; i < 40; i++, pressed++) await page.keyboard.press('Tab');
    order = await page.evaluate(() => (window as unknown as { __kbd: { order: string[] } }).__kbd.order.slice());
    if (order.length > 1 && order.indexOf(order[0], 1) > 0) break;
  }
  await page.evaluate(() => (window as unknown as { __kbd: { stop: () => void } }).__kbd.stop());
  const reached = new Set(order);
  const labels = new Map(setup.expected.map((e) => [e.key, e.label]));
  return {
    order: order.map((k) => labels.get(k) ?? k),
    unreachable: setup.expected.filter((e) => !reached.has(e.key)).map((e) => e.label),
    positiveTabindex: setup.positiveTabindex,
    clickableWithoutKeyboard: setup.clickableWithoutKeyboard,
  };
}
