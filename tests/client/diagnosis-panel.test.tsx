// @vitest-environment happy-dom
import { afterEach, describe, expect, it, vi } from 'vitest';
import { cleanup, screen, within } from '@testing-library/react';
import userEvent from '@testing-library/user-event';
import type { Diagnosis } from '@shared/schemas/review';
import { DiagnosisWithQuestions } from '../../src/app/routes/analysis/fit-views/diagnosis';
import { evidenceId, widthWords } from '../../src/features/diagnosis/components/diagnosis-panel';
import { convergedResult } from './fit-fixtures';
import { json, renderWithApp, stubServer } from './helpers';
import { diagnosis, questionSummary } from './review-fixtures';

afterEach(() => {
  cleanup();
  vi.unstubAllGlobals();
});

function renderPanel(d: Diagnosis = diagnosis(), mayRaise = false) {
  const result = convergedResult();
  const calls = stubServer((method, url) => {
    if (url === '/api/analyses/demo/questions?entry=jes') return json(200, [questionSummary({ state: 'answered', answers: 1 })]);
    if (url === '/api/analyses/demo/questions' && method === 'POST') return json(201, { ...questionSummary(), body: 'x', thread: [] });
    return undefined;
  });
  const utils = renderWithApp(<DiagnosisWithQuestions slug="demo" diagnosis={d} result={result} yields={result.yields} mayRaise={mayRaise} />);
  return { ...utils, calls };
}

describe('the diagnosis panel', () => {
  it('shows the pull, constraint, impacts and rank with the over-constraint mark', () => {
    renderPanel();
    const pull = screen.getByRole('region', { name: 'Pull, constraint and impact' });
    expect(within(pull).getByText('+0.200')).toBeTruthy();
    expect(within(pull).getByText('0.440')).toBeTruthy();
    expect(within(pull).getByText('over-constrained (below 0.5)')).toBeTruthy();
    expect(within(pull).getByRole('img', { name: 'Δμ from +0.055 (θ lowered) to −0.060 (θ raised)' })).toBeTruthy();
    expect(within(pull).getByRole('img', { name: 'pull +0.20' })).toBeTruthy();
    expect(within(pull).getByText('2')).toBeTruthy();
  });

  it('sets the width with no correlations beside σ̂ and says what the ratio means', () => {
    renderPanel();
    const width = screen.getByRole('region', { name: 'Width: the data alone against the fit' });
    expect(within(width).getByText('0.400')).toBeTruthy();
    expect(within(width).getByText('1.10')).toBeTruthy();
    expect(within(width).getByText(/the information in the bins below explains the constraint/)).toBeTruthy();
    expect(widthWords(0.8, 0.4)).toMatch(/2\.00 times .* correlations with other parameters widen it/);
  });

  it('lists the regions and bins by their share of the information, largest first', () => {
    renderPanel();
    const regions = screen.getByRole('list', { name: "Share of jes's information by region" });
    expect(within(regions).getAllByRole('listitem').map((li) => li.textContent)).toEqual([
      expect.stringMatching(/^Control region.*80 %$/),
      expect.stringMatching(/^The prior.*16 %$/),
      expect.stringMatching(/^Signal region.*4 %$/),
    ]);
    const bins = screen.getByRole('list', { name: "Share of jes's information by bin" });
    expect(within(bins).getAllByRole('listitem')[0].textContent).toMatch(/^Control region, bin 1.*64 %$/);
    // the control region's distribution washes the bins that carry the information
    // the distributions of the two regions with information wash the bins that carry it
    expect(screen.getAllByText(/: where jes’s information lies$/).map((c) => c.textContent)).toEqual(['Control region: where jes’s information lies', 'Signal region: where jes’s information lies']);
    expect(screen.getAllByText('bins carrying jes’s information (stronger = more)')).toHaveLength(2);
  });

  it('sets each bin’s variation beside the data’s precision, in a chart and a table', () => {
    renderPanel();
    const table = screen.getByRole('table', { name: "Variations against the data's precision in Control region" });
    const first = within(table).getAllByRole('row')[1];
    const cells = within(first).getAllByRole('cell').map((c) => c.textContent);
    expect(cells.slice(1)).toEqual(['104.0', '10.2', '+31.20', '−26.00', '3.06', '64 %']);
    expect(screen.getByRole('img', { name: /Control region: jes at ±1 against the data’s precision: 2 bins; the largest ratio .* is 3\.1/ })).toBeTruthy();
  });

  it('draws the parameter’s own scan with its q = 1 crossings, and its strongest correlations signed', () => {
    renderPanel();
    expect(screen.getByRole('img', { name: /Likelihood scan of θ \(jes\)/ })).toBeTruthy();
    const scan = screen.getByRole('region', { name: 'Profile likelihood scan' });
    expect(within(scan).getByText('−0.240')).toBeTruthy();
    expect(within(scan).getByText('0.640')).toBeTruthy();
    const corr = screen.getByRole('list', { name: 'Strongest correlations of jes' });
    expect(within(corr).getAllByRole('listitem').map((li) => li.textContent)).toEqual([expect.stringContaining('ρ = −0.62'), expect.stringContaining('ρ = +0.31')]);
    expect(within(corr).getAllByRole('link')[0].getAttribute('href')).toBe('/a/demo/fits/7/diagnostics?parameter=k_bkg');
  });

  it('shows the convergence warnings and says that it informs the review, not replaces it', async () => {
    renderPanel();
    expect(within(screen.getByRole('list', { name: 'Convergence warnings' })).getByText('jes_flavour has a tiny effect.')).toBeTruthy();
    expect(screen.getByText(/informs the collaboration’s own statistical review; it does not replace it/)).toBeTruthy();
    expect(await screen.findByRole('link', { name: 'Why is jes constrained to 0.44?' })).toBeTruthy();
  });

  it('points every sentence of the summary at an element of the panel, and lights it when followed', async () => {
    const user = userEvent.setup();
    renderPanel();
    const summary = screen.getByRole('list', { name: 'Summary' });
    const links = within(summary).getAllByRole('link');
    expect(links).toHaveLength(6);
    for (const link of links) {
      const id = link.getAttribute('href')!.slice(1);
      expect(document.getElementById(id), id).not.toBeNull();
    }
    expect(links.map((l) => l.getAttribute('href'))).toEqual(['pull', 'width', 'regions', 'bins', 'scan', 'correlations'].map((e) => `#${evidenceId(e as never)}`));
    const scan = document.getElementById('diagnosis-scan')!;
    expect(scan.getAttribute('data-lit')).toBeNull();
    await user.click(links[4]);
    expect(scan.getAttribute('data-lit')).toBe('true');
    expect(document.activeElement).toBe(scan);
  });

  it('lets a convener raise a question tied to this fit, and nobody else', async () => {
    const user = userEvent.setup();
    const { calls } = renderPanel(diagnosis(), true);
    await user.click(screen.getByRole('button', { name: 'Raise a question on jes' }));
    const form = screen.getByRole('form', { name: 'Raise a question on jes' });
    expect((within(form).getByLabelText('Title') as HTMLInputElement).value).toBe('Why is jes constrained to 0.44?');
    await user.type(within(form).getByLabelText('Question'), 'Which bins carry it?');
    await user.click(within(form).getByRole('button', { name: 'Raise the question' }));
    expect(await screen.findByRole('link', { name: 'Open the thread' })).toBeTruthy();
    expect(calls.find((c) => c.method === 'POST')?.body).toEqual({ entry: 'jes', fitId: 7, title: 'Why is jes constrained to 0.44?', body: 'Which bins carry it?' });
    cleanup();
    renderPanel(diagnosis(), false);
    expect(screen.queryByRole('button', { name: /Raise a question/ })).toBeNull();
  });
});
