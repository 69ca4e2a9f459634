import type { Page } from 'playwright-core';
import { describe, expect, it } from 'vitest';
import { api, screenshot, serverAndBrowser, signIn, type Browser } from './support';

/**
 * No default column of any table is out of reach at 1280 and 1440 px: every header cell is either
 * fully in the window, or in a frame that scrolls sideways and brings it fully into the frame's
 * box (not under a sticky first column); such a frame is no taller than the window, so its scroll
 * bar is in view with its headers, and it does not run past the window's edge itself. Each screen
 * with a table, as the role that uses it, on the demo as it starts (plus a second fit to compare
 * and a small toy run).
 */

const WIDTHS = [1280, 1440] as const;

/** What is wrong with the tables on the page as it is: one line per table and column that cannot be reached. */
async function unreachableHeaders(page: Page): Promise<string[]> {
  return page.evaluate(() => {
    const problems: string[] = [];
    const vw = document.documentElement.clientWidth;
    const vh = window.innerHeight;
    if (document.documentElement.scrollWidth > vw + 1) problems.push(`the page scrolls sideways (${document.documentElement.scrollWidth} px in a ${vw} px window)`);
    /** The nearest ancestor that clips sideways: the table's frame. */
    const frameOf = (el: Element): HTMLElement | null => {
      for (let p = el.parentElement; p && p !== document.body; p = p.parentElement) if (getComputedStyle(p).overflowX !== 'visible') return p;
      return null;
    };
    const text = (th: Element) => (th.textContent ?? '').replace(/[↕▲▼]/g, '').replace(/\s+/g, ' ').trim() || '(no text)';
    for (const table of Array.from(document.querySelectorAll('table'))) {
      if (!table.checkVisibility()) continue;
      const name = table.getAttribute('aria-label') ?? table.querySelector('caption')?.textContent ?? '(a table without a name)';
      const headers = Array.from(table.querySelectorAll<HTMLElement>('thead th'));
      const frame = frameOf(table);
      if (!frame) {
        for (const th of headers) {
          const r = th.getBoundingClientRect();
          if (r.left < -0.5 || r.right > vw + 0.5) problems.push(`table “${name}”, column “${text(th)}”: past the window's edge, with no frame to scroll it into view`);
        }
        continue;
      }
      const f = frame.getBoundingClientRect();
      if (f.left < -0.5 || f.right > vw + 0.5) problems.push(`table “${name}”: its frame runs past the window (${Math.round(f.left)}–${Math.round(f.right)} px of ${vw})`);
      const overflow = getComputedStyle(frame).overflowX;
      const scrolls = frame.scrollWidth > frame.clientWidth + 1;
      if (scrolls && overflow !== 'auto' && overflow !== 'scroll') problems.push(`table “${name}”: its frame cuts it off (overflow ${overflow}) and cannot scroll`);
      if (scrolls && f.height > vh + 0.5) problems.push(`table “${name}”: it scrolls sideways, but its frame is ${Math.round(f.height)} px high in a ${vh} px window, so the scroll bar is out of view with the headers`);
      const sticky = headers[0] && getComputedStyle(headers[0]).position === 'sticky' ? headers[0] : null;
      const start = frame.scrollLeft;
      // The box in which a header must fit: the frame's inside, within the window.
      const inner = { left: Math.max(0, f.left + frame.clientLeft), right: Math.min(vw, f.left + frame.clientLeft + frame.clientWidth) };
      headers.forEach((th, i) => {
        const covered = sticky && i > 0 ? sticky.getBoundingClientRect().width : 0;
        let r = th.getBoundingClientRect();
        if (r.right > inner.right + 0.5 || r.left < inner.left + covered - 0.5) {
          // scroll so that the header's right edge meets the frame's right edge (or its left edge the sticky column's)
          frame.scrollLeft += r.right > inner.right ? r.right - inner.right : r.left - inner.left - covered;
          r = th.getBoundingClientRect();
        }
        const fits = r.left >= inner.left + covered - 0.5 && r.right <= inner.right + 0.5;
        if (!fits) problems.push(`table “${name}”, column “${text(th)}”: ${Math.round(r.left)}–${Math.round(r.right)} px cannot be brought inside ${Math.round(inner.left + covered)}–${Math.round(inner.right)} px${scrolls ? '' : ' (its frame does not scroll)'}`);
        frame.scrollLeft = start;
      });
    }
    return problems;
  });
}

type Screen = { name: string; path: string; ready: (page: Page) => Promise<unknown> };

async function as(live: { browser: Browser; server: { url: string } }, email: string) {
  await live.browser.context.clearCookies();
  await signIn(live.browser.page, live.server.url, email);
  await live.browser.page.waitForURL((u) => !u.pathname.startsWith('/sign-in'));
}

async function waitForJob(browser: Browser, path: string) {
  for (let i = 0; i < 600; i++) {
    const { body } = await api(browser, 'GET', path);
    if (!['queued', 'running'].includes(body.state)) return body;
    await new Promise((r) => setTimeout(r, 250));
  }
  throw new Error(`${path} did not end`);
}

describe('wide tables: every default column can be reached at 1280 and 1440 px', () => {
  const live = serverAndBrowser();
  const failures: string[] = [];
  const checked: string[] = [];

  async function check(screens: Screen[]) {
    const { page } = live.browser;
    for (const width of WIDTHS) {
      await page.setViewportSize({ width, height: 900 });
      for (const s of screens) {
        await page.goto(`${live.server.url}${s.path}`);
        await s.ready(page);
        // the tables inside closed <details> are default columns too
        await page.evaluate(() => document.querySelectorAll('details:has(table)').forEach((d) => ((d as HTMLDetailsElement).open = true)));
        await page.waitForTimeout(300);
        const tables = await page.locator('table').count();
        checked.push(`${s.name} at ${width} px: ${tables} table${tables === 1 ? '' : 's'}`);
        expect({ screen: s.name, tables: tables > 0 }).toEqual({ screen: s.name, tables: true });
        for (const p of await unreachableHeaders(page)) failures.push(`${s.name} at ${width} px: ${p}`);
        if (width === 1280 && s.name === 'register') await screenshot(page, 'wide-register-1280');
      }
    }
  }

  it('the analysis screens, as an analyst', async () => {
    await as(live, 'otto@lantern.example');
    const { browser } = live;
    const fits = (await api(browser, 'GET', '/api/analyses/vireon-search/fits')).body as { id: number; label: string; state: string }[];
    await Promise.all(fits.map((f) => waitForJob(browser, `/api/analyses/vireon-search/fits/${f.id}`)));
    const asimov = fits.find((f) => f.label === 'Pre-fit Asimov, μ = 1')!;
    const control = fits.find((f) => f.label === 'Control regions, observed')!;
    const cascade = ((await api(browser, 'GET', '/api/analyses/cascade-rate/fits')).body as { id: number; label: string }[]).find((f) => f.label === 'Observed, full impacts')!;
    await waitForJob(browser, `/api/analyses/cascade-rate/fits/${cascade.id}`);
    // a small toy run, so that its tables exist
    const toys = await api(browser, 'POST', `/api/analyses/cascade-rate/fits/${cascade.id}/toys`, { count: 20, seed: 3 });
    expect(toys.status).toBe(202);
    await waitForJob(browser, `/api/analyses/cascade-rate/toys/${toys.body.id}`);

    const reviewSet = ((await api(browser, 'GET', '/api/analyses/vireon-search/review-sets')).body as { id: number; label: string }[]).find((s) => s.label === 'Before asking to unblind')!;

    const fit = `/a/vireon-search/fits/${asimov.id}`;
    // attached is enough: a table inside a closed <details> is opened before the check
    const table = (name: string) => (page: Page) => page.locator(`table[aria-label="${name}"]`).first().waitFor({ state: 'attached', timeout: 60_000 });
    await check([
      { name: 'register', path: '/a/vireon-search/register', ready: (p) => p.getByRole('cell', { name: 'flare_escale' }).waitFor() },
      { name: 'pruning', path: '/a/vireon-search/pruning', ready: table('Candidates: Shapes flat within their noise (p above 0.05)') },
      {
        name: 'entry',
        path: '/a/cascade-rate/entries/halo_norm',
        ready: async (p) => {
          // a revision's before and after is the entry's table
          await p.getByRole('button', { name: 'Show before and after' }).first().click();
          await p.getByRole('list', { name: 'Revisions' }).getByRole('table').first().waitFor();
        },
      },
      {
        name: 'model',
        path: '/a/vireon-search/model',
        ready: async (p) => {
          await table('Nominal templates')(p);
          await table('Signal hypotheses')(p);
        },
      },
      { name: 'fits', path: '/a/vireon-search/fits', ready: table('Fits') },
      { name: 'fit summary', path: fit, ready: table('Floating normalisations') },
      { name: 'fit pulls', path: `${fit}/pulls`, ready: table('Pulls and constraints') },
      { name: 'fit impact ranking', path: `${fit}/impacts`, ready: table('Impact ranking') },
      { name: 'fit correlations', path: `${fit}/correlations`, ready: table('Strongest correlations') },
      { name: 'fit diagnosis', path: `${fit}/diagnostics?parameter=flare_eres`, ready: (p) => p.getByRole('article', { name: 'Diagnosis of flare_eres' }).getByRole('table').first().waitFor({ timeout: 120_000 }) },
      { name: 'fit compare', path: `${fit}/compare?with=${control.id}`, ready: table('Changes per parameter') },
      { name: 'pseudo-experiments', path: `/a/cascade-rate/fits/${cascade.id}/toys?run=${toys.body.id}`, ready: table('q0: toys against the asymptotic formula') },
      { name: 'review set', path: `/a/vireon-search/review-sets/${reviewSet.id}`, ready: table('Pulls and constraints across the set') },
      { name: 'questions', path: '/a/cascade-rate/questions', ready: table('Questions') },
      { name: 'members', path: '/a/vireon-search/members', ready: table('Members') },
    ]);
  });

  it('the admin screens', async () => {
    await as(live, 'admin@lantern.example');
    await check([
      { name: 'accounts', path: '/admin/accounts', ready: (p) => p.getByRole('table', { name: 'Accounts' }).waitFor() },
      { name: 'outbox', path: '/admin/outbox', ready: (p) => p.getByRole('table').first().waitFor() },
    ]);
  });

  it('finds no column out of reach', () => {
    console.log(`checked:\n${checked.join('\n')}`);
    expect(failures).toEqual([]);
  });
});
