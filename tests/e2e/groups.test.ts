import { describe, expect, it } from 'vitest';
import { screenshot, serverAndBrowser, signIn } from './support';

describe('the groups board', () => {
  const live = serverAndBrowser();

  it('moves an entry to the next group with the keyboard alone, and the move is stored', async () => {
    const { page } = live.browser;
    await signIn(page, live.server.url, 'otto@lantern.example');
    await page.waitForURL((u) => !u.pathname.startsWith('/sign-in'));
    await page.goto(`${live.server.url}/a/vireon-search/groups`);
    const luminosity = page.getByRole('list', { name: 'Entries in luminosity' });
    const calorimetry = page.getByRole('list', { name: 'Entries in calorimetry' });
    await luminosity.getByText('beam_energy').waitFor();

    // space picks up, the right arrow moves one group over (luminosity → calorimetry), space drops
    await page.getByRole('button', { name: /^Move beam_energy/ }).focus();
    // dnd-kit measures the board a frame after pick-up; a person pauses between keys anyway
    for (const key of ['Space', 'ArrowRight', 'Space']) {
      await page.keyboard.press(key);
      await page.waitForTimeout(250);
    }
    await calorimetry.getByText('beam_energy').waitFor();
    await page.getByText('beam_energy (Beam energy spread) was moved from luminosity to calorimetry.').waitFor({ state: 'attached' });
    await screenshot(page, 'groups-after-keyboard-move');

    const groups = await page.evaluate(async () => (await fetch('/api/analyses/vireon-search/groups')).json());
    const calo = groups.groups.find((g: { name: string }) => g.name === 'calorimetry');
    expect(calo.entries).toContain('beam_energy');
    const entry = await page.evaluate(async () => (await fetch('/api/analyses/vireon-search/entries/beam_energy')).json());
    expect(entry.revisions[0]).toMatchObject({ action: 'group.changed', summary: 'Moved from "luminosity" to "calorimetry".' });
  });

  it('shows a reader the board without drag handles', async () => {
    const { page, context } = live.browser;
    await context.clearCookies();
    await signIn(page, live.server.url, 'rafe@lantern.example');
    await page.waitForURL((u) => !u.pathname.startsWith('/sign-in'));
    await page.goto(`${live.server.url}/a/vireon-search/groups`);
    await page.getByText('lumi', { exact: true }).first().waitFor();
    await page.getByText('Reader', { exact: true }).first().waitFor();
    expect(await page.getByRole('button', { name: /^Move / }).count()).toBe(0);
  });
});
