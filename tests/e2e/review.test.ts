import { describe, expect, it } from 'vitest';
import { screenshot, serverAndBrowser, signIn, type Browser, api } from './support';

/**
 * The review loop on the demo analysis "cascade-rate" (unblinded; halo_norm is its over-constrained
 * parameter, owned by Otto): a fit, a convener's question raised from the impact ranking, the
 * parameter's diagnosis, the owner's answer, the resolution, and the e-mails each step sends.
 */

const SLUG = 'cascade-rate';

async function as(live: { browser: Browser; server: { url: string } }, email: string) {
  await live.browser.context.clearCookies();
  await signIn(live.browser.page, live.server.url, email);
  await live.browser.page.waitForURL((u) => !u.pathname.startsWith('/sign-in'));
}

describe('a convener questions an over-constrained parameter, the owner answers, the convener resolves', () => {
  const live = serverAndBrowser();
  let fitId = 0;
  let questionId = 0;

  it('has a succeeded observed fit with full impacts (an analyst runs one if none exists)', async () => {
    await as(live, 'otto@lantern.example');
    const fits = await api(live.browser, 'GET', `/api/analyses/${SLUG}/fits`);
    const existing = (fits.body as { id: number; state: string; options: { impacts: string; dataset: string } }[]).find(
      (f) => f.state === 'succeeded' && f.options.impacts === 'full' && f.options.dataset === 'observed',
    );
    if (existing) fitId = existing.id;
    else {
      const version = await api(live.browser, 'POST', `/api/analyses/${SLUG}/versions`, { note: 'Review of halo_norm' });
      expect(version.status).toBe(201);
      const started = await api(live.browser, 'POST', `/api/analyses/${SLUG}/fits`, { version: version.body.number, label: 'observed, full impacts', options: { dataset: 'observed', impacts: 'full' } });
      expect(started.status).toBe(202);
      fitId = started.body.id;
      for (let i = 0; i < 600; i++) {
        const { body } = await api(live.browser, 'GET', `/api/analyses/${SLUG}/fits/${fitId}`);
        if (!['queued', 'running'].includes(body.state)) {
          expect(body.state).toBe('succeeded');
          break;
        }
        await new Promise((r) => setTimeout(r, 250));
      }
    }
    const { body } = await api(live.browser, 'GET', `/api/analyses/${SLUG}/fits/${fitId}`);
    const halo = body.result.nuisance.find((n: { name: string }) => n.name === 'halo_norm');
    expect(halo.overConstrained).toBe(true);
  });

  it('lets the convener raise a question on halo_norm from its row in the impact ranking', async () => {
    await as(live, 'mira@lantern.example');
    const { page } = live.browser;
    await page.goto(`${live.server.url}/a/${SLUG}/fits/${fitId}/impacts`);
    await page.getByRole('radio', { name: 'all' }).check();
    await page.getByRole('button', { name: 'Raise a question on halo_norm' }).click();
    const form = page.getByRole('form', { name: 'Raise a question on halo_norm' });
    // the demo holds an answered question on it already; this one asks something else
    await form.getByLabel('Title').fill('Does the halo control region alone set the width of halo_norm?');
    await form.getByLabel('Question').fill('The beam-halo normalisation ends at 0.41 of its prior width. Which bins constrain it, and is the 30 % variation right?');
    await form.getByRole('button', { name: 'Raise the question' }).click();
    await page.getByRole('link', { name: 'Open the thread' }).waitFor();
    questionId = Number((await page.getByRole('link', { name: 'Open the thread' }).getAttribute('href'))!.split('/').pop());
    expect(questionId).toBeGreaterThan(0);
    // the row is marked now, in words
    await page.getByRole('table', { name: 'Impact ranking' }).getByRole('img', { name: /unresolved question/ }).first().waitFor();
    await screenshot(page, 'review-impacts-question');
  });

  it('shows the diagnosis of halo_norm: the data alone explain the constraint, in a control region', async () => {
    const { page } = live.browser;
    await page.goto(`${live.server.url}/a/${SLUG}/fits/${fitId}/diagnostics?parameter=halo_norm`);
    const panel = page.getByRole('article', { name: 'Diagnosis of halo_norm' });
    await panel.waitFor({ timeout: 120_000 });
    await panel.getByRole('list', { name: 'Summary' }).waitFor();
    const diag = await api(live.browser, 'GET', `/api/analyses/${SLUG}/fits/${fitId}/diagnosis/halo_norm`);
    expect(diag.status).toBe(200);
    expect(diag.body.constraint).toBeGreaterThan(0.3);
    expect(diag.body.constraint).toBeLessThan(0.5);
    // every sentence points at an element that exists
    const hrefs = await panel.getByRole('list', { name: 'Summary' }).getByRole('link').evaluateAll((links) => links.map((l) => l.getAttribute('href')));
    expect(hrefs.length).toBe(diag.body.summary.length);
    for (const h of hrefs) expect(await page.locator(h!).count()).toBe(1);
    await page.waitForTimeout(600);
    await screenshot(page, 'review-diagnosis');
    await panel.getByRole('list', { name: 'Summary' }).getByRole('link').first().click();
    await page.waitForTimeout(400);
    const summary = page.getByRole('region', { name: 'In plain words' });
    await summary.scrollIntoViewIfNeeded();
    await summary.screenshot({ path: 'test-output/screenshots/review-diagnosis-summary.png' });
  });

  it('lets the owner answer and the convener resolve, with the e-mails in the outbox', async () => {
    const { page } = live.browser;
    await as(live, 'otto@lantern.example');
    await page.goto(`${live.server.url}/a/${SLUG}/questions/${questionId}`);
    const answer = page.getByRole('form', { name: 'Answer' });
    await answer.getByLabel('Your answer').fill('The halo control region has about ten thousand events per bin, so its statistical precision is 1 %: far below the 30 % variation. The constraint is expected.');
    await answer.getByRole('button', { name: 'Post the answer' }).click();
    await page.getByText('Answered', { exact: true }).first().waitFor();

    await as(live, 'mira@lantern.example');
    await page.goto(`${live.server.url}/a/${SLUG}/questions/${questionId}`);
    await page.getByLabel('Note on resolving (optional)').fill('Agreed; the control region carries it.');
    await page.getByRole('button', { name: 'Resolve the question' }).click();
    await page.getByText(/Resolved by/).waitFor();
    await screenshot(page, 'review-thread');

    await page.goto(`${live.server.url}/a/${SLUG}/questions`);
    await page.getByRole('table', { name: 'Questions' }).waitFor();
    await screenshot(page, 'review-questions');
    await page.getByLabel('State').selectOption('resolved');
    await page.waitForURL(/state=resolved/);
    await page.getByRole('table', { name: 'Questions' }).getByRole('link', { name: 'Does the halo control region alone set the width of halo_norm?' }).waitFor();

    await as(live, 'admin@lantern.example');
    let subjects: { to: string; subject: string }[] = [];
    for (let i = 0; i < 40; i++) {
      const outbox = await api(live.browser, 'GET', '/api/outbox');
      subjects = (outbox.body as { to: string; subject: string }[]).filter((m) => /alone set the width of halo_norm/.test(m.subject));
      if (subjects.length >= 3) break;
      await new Promise((r) => setTimeout(r, 250));
    }
    // raised: the owner (Otto) and the analysts; answered and resolved follow
    expect(subjects.some((m) => m.to.includes('otto@lantern.example'))).toBe(true);
    expect(subjects.length).toBeGreaterThanOrEqual(3);
    await page.goto(`${live.server.url}/admin/outbox`);
    await page.waitForTimeout(500);
    await screenshot(page, 'review-outbox');
  });

  it('shows the blinding state and log on the overview', async () => {
    const { page } = live.browser;
    await as(live, 'mira@lantern.example');
    await page.goto(`${live.server.url}/a/${SLUG}`);
    await page.getByRole('heading', { name: 'This analysis is unblinded' }).waitFor();
    await screenshot(page, 'review-overview');
    // the blinded demo analysis, where the demo's analyst has asked to unblind: the convener declines for now
    await as(live, 'mira@lantern.example');
    await page.goto(`${live.server.url}/a/vireon-search`);
    await page.getByRole('heading', { name: 'Unblinding has been requested' }).waitFor();
    await screenshot(page, 'review-overview-requested');
    await page.getByLabel('Note').fill('Not before the hidden-signal checks are reviewed at the next meeting.');
    await page.getByRole('button', { name: 'Decline' }).click();
    await page.getByRole('heading', { name: 'This analysis is blinded' }).waitFor();
    // as an analyst who may ask to unblind
    await as(live, 'otto@lantern.example');
    await page.goto(`${live.server.url}/a/vireon-search`);
    await page.getByRole('heading', { name: 'This analysis is blinded' }).waitFor();
    await page.getByRole('form', { name: 'Request unblinding' }).waitFor();
    await screenshot(page, 'review-overview-blinded');

    // a convener asks for two approvals; the analyst requests; one approval leaves it blinded
    await as(live, 'mira@lantern.example');
    await page.goto(`${live.server.url}/a/vireon-search`);
    await page.getByText('Unblinding needs one convener other than the requester to approve.').waitFor();
    await page.getByRole('button', { name: 'Require two conveners to approve' }).click();
    await page.getByText('Unblinding needs two conveners other than the requester to approve.').waitFor();
    await as(live, 'otto@lantern.example');
    await page.goto(`${live.server.url}/a/vireon-search`);
    await page.getByLabel('Why the analysis is ready to unblind').fill('The control regions and the hidden-signal checks are understood.');
    await page.getByRole('button', { name: 'Request unblinding' }).click();
    await page.getByRole('heading', { name: 'Unblinding has been requested' }).waitFor();
    await as(live, 'mira@lantern.example');
    await page.goto(`${live.server.url}/a/vireon-search`);
    // the server's checklist is shown, and approving with its open items needs a note
    await page.getByRole('region', { name: 'Before unblinding' }).waitFor();
    await page.getByRole('button', { name: 'Approve unblinding' }).click();
    await page.getByText('Approving with open items needs a note.').waitFor();
    await page.getByLabel('Note').fill('Agreed at the approval meeting: the open items are followed up before the note goes out.');
    await page.getByRole('button', { name: 'Approve unblinding' }).click();
    await page.getByText('1 of 2 approvals given.', { exact: false }).waitFor();
    await page.getByRole('list', { name: 'Blinding log' }).getByText('approved unblinding (first of two approvals)').waitFor();
    await page.getByRole('heading', { name: 'Unblinding has been requested' }).waitFor();
    await screenshot(page, 'review-overview-two-approvals');
    // approving twice is refused with the reason
    await page.getByLabel('Note').fill('Once more.');
    await page.getByRole('button', { name: 'Approve unblinding' }).click();
    await page.getByText('You have approved this request already: a second convener must approve it.').waitFor();
  });
});
