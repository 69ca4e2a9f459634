import { describe, expect, it } from 'vitest';
import { screenshot, serverAndBrowser, signIn } from './support';

describe('signing in and opening an analysis in the browser', () => {
  const live = serverAndBrowser();

  it('shows the sign-in page to a visitor who is not signed in', async () => {
    const { page } = live.browser;
    await page.goto(`${live.server.url}/a/vireon-search`);
    await page.waitForURL(/\/sign-in/);
    await page.getByRole('button', { name: /sign in/i }).waitFor();
    await screenshot(page, 'sign-in');
  });

  it('tells a person whose password is wrong, and lets them try again', async () => {
    const { page } = live.browser;
    await signIn(page, live.server.url, 'otto@lantern.example', 'wrong-password');
    await page.getByText(/e-mail and password do not match/i).waitFor();
  });

  it('signs an analyst in, lists their analyses and opens the blinded one', async () => {
    const { page } = live.browser;
    await signIn(page, live.server.url, 'otto@lantern.example');
    await page.getByRole('link', { name: /Vireon search in flare pairs/ }).first().click();
    await page.waitForURL(/\/a\/vireon-search$/);
    await page.getByRole('heading', { name: /Vireon search in flare pairs/ }).first().waitFor();
    await page.getByText(/blinded/i).first().waitFor();
    await screenshot(page, 'analysis-overview');
  });

  it('shows the register of the demo with its forty entries', async () => {
    const { page } = live.browser;
    await page.goto(`${live.server.url}/a/vireon-search/register`);
    await page.getByRole('cell', { name: 'flare_escale' }).waitFor();
    expect(await page.getByRole('row').count()).toBe(41);
    await screenshot(page, 'register');
  });

  it('shows signal-region data as withheld on the model screen while blinded', async () => {
    const { page } = live.browser;
    await page.goto(`${live.server.url}/a/vireon-search/model`);
    await page.getByText(/withheld/i).first().waitFor();
    await screenshot(page, 'model');
  });

  it('lets a convener manage members, and shows a reader the list without the controls', async () => {
    const { page, context } = live.browser;
    await context.clearCookies();
    await signIn(page, live.server.url, 'mira@lantern.example');
    await page.waitForURL((u) => !u.pathname.startsWith('/sign-in'));
    await page.goto(`${live.server.url}/a/vireon-search/members`);
    await page.getByRole('rowheader', { name: /Rafe Orlowyn/ }).waitFor();
    await page.getByRole('button', { name: /^invite$/i }).waitFor();
    await screenshot(page, 'members-convener');

    await context.clearCookies();
    await signIn(page, live.server.url, 'rafe@lantern.example');
    await page.waitForURL((u) => !u.pathname.startsWith('/sign-in'));
    await page.goto(`${live.server.url}/a/vireon-search/members`);
    await page.getByRole('rowheader', { name: /Mira Quellbright/ }).waitFor();
    // the role badge comes with the overview, which also decides whether the controls show
    await page.getByText('Reader', { exact: true }).first().waitFor();
    await expect(page.getByRole('button', { name: /^invite$/i }).count()).resolves.toBe(0);
    await screenshot(page, 'members-reader');
  });
});
