// @vitest-environment happy-dom
import { afterEach, describe, expect, it, vi } from 'vitest';
import { cleanup, render, screen, waitFor, within } from '@testing-library/react';
import userEvent from '@testing-library/user-event';
import { FitResultRoute } from '../../src/app/routes/analysis/fit-result';
import { ToyRunResult } from '../../src/features/toys/components/toy-result';
import { toyRequest } from '../../src/features/toys/components/start-toys-form';
import { fitDetail, overview, type StoredFit } from './fit-fixtures';
import { json, renderWithApp, stubServer } from './helpers';
import { toyRun, toySummary } from './toy-fixtures';

afterEach(() => {
  cleanup();
  vi.unstubAllGlobals();
});

const pullNames = () =>
  within(screen.getByRole('table', { name: 'Nuisance parameters over the toys' }))
    .getAllByRole('row')
    .slice(1)
    .map((r) => within(r).getAllByRole('button')[0].textContent);

describe('the result of a toy run', () => {
  it('puts the toy p-value of q0 beside the asymptotic one, with both Z and what they say', () => {
    render(<ToyRunResult run={toyRun()} />);
    const table = screen.getByRole('table', { name: 'q0: toys against the asymptotic formula' });
    // 12 of 980 toys at or above q0,obs = 6.25; asymptotic 1 − Φ(2.5) = 0.00621
    expect(within(table).getByTestId('toy-p-value').textContent).toContain('0.0122 ± 0.0035');
    expect(within(table).getByTestId('toy-p-value').textContent).toContain('12 of 980 toys');
    expect(within(table).getByTestId('asymptotic-p-value').textContent).toBe('0.0062');
    expect(within(table).getByTestId('toy-z').textContent).toContain('2.25 σ');
    expect(within(table).getByTestId('asymptotic-z').textContent).toBe('2.50 σ');
    expect(screen.getByText(/The toys bear out the asymptotic p-value/)).toBeTruthy();
    // the fraction at q0 = 0 against one half
    expect(within(table).getByRole('rowheader', { name: 'Fraction at q0 = 0' })).toBeTruthy();
    expect(within(table).getByText('0.500')).toBeTruthy();
  });

  it('shows the counts with the failures and warnings beside them, and μ̂ with its mean and sd', () => {
    render(<ToyRunResult run={toyRun()} />);
    expect(screen.getByText('Converged').nextElementSibling?.textContent).toBe('980');
    expect(screen.getByText('Failed').nextElementSibling?.textContent).toBe('20');
    expect(screen.getByText('Asked for').nextElementSibling?.textContent).toBe('1,000');
    expect(within(screen.getByRole('list', { name: 'Failed toys' })).getByText(/The minimiser stopped after 500 iterations/)).toBeTruthy();
    expect(within(screen.getByRole('list', { name: 'Warnings on this run' })).getByText(/20 toys failed to converge/)).toBeTruthy();
    expect(screen.getByRole('img', { name: /Standardised μ̂ over 980 toys/ })).toBeTruthy();
    expect(screen.getByRole('img', { name: /q0 of the 480 toys with q0 > 0.*log scale/ })).toBeTruthy();
    expect(screen.getByRole('button', { name: 'Download Standardised μ̂ over 980 toys as SVG' })).toBeTruthy();
  });

  it('marks the parameter whose pull mean is more than 3 errors from 0 and the one whose sd is off 1, and lists them first', () => {
    render(<ToyRunResult run={toyRun()} />);
    expect(pullNames()).toEqual(['jes', 'lumi', 'theory_scale']);
    const [jes, lumi, theory] = within(screen.getByRole('table', { name: 'Nuisance parameters over the toys' })).getAllByRole('row').slice(1);
    expect(within(jes).getByText('mean off 0')).toBeTruthy();
    expect(within(jes).getByText('+4.7 errors')).toBeTruthy();
    expect(within(lumi).getByText('sd off 1')).toBeTruthy();
    expect(within(lumi).getByText('−4.4 errors')).toBeTruthy();
    expect(within(theory).queryByText(/off/)).toBeNull();
  });

  it('sorts the pulls by a column and shows the histogram of the parameter chosen', async () => {
    const user = userEvent.setup();
    render(<ToyRunResult run={toyRun()} />);
    // the worst row is chosen first
    expect(screen.getByRole('img', { name: /Pull of jes over 980 toys/ })).toBeTruthy();
    await user.click(screen.getByRole('button', { name: /Parameter/ }));
    expect(pullNames()).toEqual(['jes', 'lumi', 'theory_scale']);
    await user.click(screen.getByRole('button', { name: /Parameter/ }));
    expect(pullNames()).toEqual(['theory_scale', 'lumi', 'jes']);
    const choose = screen.getByRole('button', { name: 'theory_scale' });
    choose.focus();
    await user.keyboard('{Enter}');
    expect(choose.getAttribute('aria-pressed')).toBe('true');
    expect(screen.getByRole('img', { name: /Pull of theory_scale over 980 toys/ })).toBeTruthy();
    expect(screen.queryByRole('img', { name: /Pull of jes/ })).toBeNull();
  });

  it('says so plainly when the toys do not bear out the asymptotic p-value', () => {
    const base = toySummary();
    const toy = 25 / 980;
    const summary = toySummary({ q0: { ...base.q0!, toysAtOrAbove: 25, toyPValue: toy, toyPValueError: Math.sqrt((toy * (1 - toy)) / 980) } });
    render(<ToyRunResult run={toyRun({ summary })} />);
    expect(screen.getByText(/The toys do not bear out the asymptotic p-value/)).toBeTruthy();
    expect(screen.getByTestId('toy-p-value').textContent).toContain('0.0255 ± 0.0050');
  });

  it('says how far the toys reach when none reached the observed q0', () => {
    const base = toySummary();
    const summary = toySummary({ q0: { ...base.q0!, observed: 16, toysAtOrAbove: 0, toyPValue: 0, toyPValueError: 0, asymptoticPValue: 3.17e-5 } });
    render(<ToyRunResult run={toyRun({ summary })} />);
    expect(screen.getByText(/These toys cannot test the asymptotic p-value/)).toBeTruthy();
    // rule of three: p < 3/980
    expect(screen.getByTestId('toy-p-value').textContent).toContain('< 0.0031');
  });

  it('shows a failed run with its failure and no numbers', () => {
    render(<ToyRunResult run={toyRun({ state: 'failed', failure: 'The generation point could not be reached: the fit at μ = 0 did not converge.', summary: null })} />);
    expect(screen.getByRole('alert').textContent).toBe('The generation point could not be reached: the fit at μ = 0 did not converge.');
    expect(screen.queryByText('Converged')).toBeNull();
    expect(screen.queryByRole('table')).toBeNull();
    expect(screen.queryByRole('img')).toBeNull();
  });

  it('shows none of the numbers of a failed run even when it carries a summary', () => {
    render(<ToyRunResult run={toyRun({ state: 'failed', failure: 'The run stopped: the worker ran out of memory.' })} />);
    expect(screen.getByText('The run stopped: the worker ran out of memory.')).toBeTruthy();
    expect(screen.getByText(/The minimiser stopped after 500 iterations/)).toBeTruthy();
    expect(screen.queryByText('980')).toBeNull();
    expect(screen.queryByText(/0\.0122/)).toBeNull();
    expect(screen.queryByRole('table')).toBeNull();
    expect(screen.queryByRole('img')).toBeNull();
  });

  it('shows the progress of a running run as toys done of toys asked', () => {
    render(<ToyRunResult run={toyRun({ state: 'running', progress: 0.25, stage: 'fitting toys', summary: null, finishedAt: null })} />);
    const bar = screen.getByRole('progressbar');
    expect(bar.getAttribute('aria-valuetext')).toBe('250 of 1,000 toys, fitting toys');
    expect(screen.queryByRole('table')).toBeNull();
  });
});

describe('the request for toys', () => {
  it('builds the body the contract asks for, and names the field that stops it', () => {
    expect(toyRequest({ count: '5000', kind: 'fixed-mu', mu: '0', seed: '42', label: '  background only ' })).toEqual({
      ok: true,
      body: { count: 5000, hypothesis: { kind: 'fixed-mu', mu: 0 }, seed: 42, label: 'background only' },
    });
    expect(toyRequest({ count: '1000', kind: 'best-fit', mu: 'x', seed: '', label: '' })).toEqual({ ok: true, body: { count: 1000, hypothesis: { kind: 'best-fit' }, label: '' } });
    const bad = toyRequest({ count: '5', kind: 'fixed-mu', mu: '', seed: '1.5', label: '' });
    expect(bad.ok).toBe(false);
    if (!bad.ok) expect(Object.keys(bad.errors).sort()).toEqual(['count', 'hypothesis', 'seed']);
  });
});

const ROUTE = '/a/:slug/fits/:fitId/:tab?';

function serveToys(role: 'analyst' | 'reader', runs = [toyRun({ summary: null }), toyRun({ id: 2, label: '', state: 'failed', progress: 0.3, failure: 'Stopped.', summary: null })], start?: () => Response) {
  const detail: StoredFit = fitDetail();
  return stubServer((method, url) => {
    if (url === '/api/analyses/demo') return json(200, overview(role));
    if (url === '/api/analyses/demo/fits/7' && method === 'GET') {
      const { correlation, information, yields, gammas, ...head } = detail.result!;
      void correlation;
      void information;
      void yields;
      return json(200, { ...detail, result: { ...head, gammas: { count: gammas.count, maxAbsPull: gammas.maxAbsPull } } });
    }
    if (url === '/api/analyses/demo/fits/7/toys' && method === 'GET') return json(200, runs);
    if (url === '/api/analyses/demo/fits/7/toys' && method === 'POST') return start?.();
    if (url === '/api/analyses/demo/toys/3') return json(200, toyRun());
    if (url === '/api/analyses/demo/toys/2') return json(200, runs[1]);
    return undefined;
  });
}

describe('the pseudo-experiments tab', () => {
  it('lists the toy runs and shows the newest that succeeded, with no form for a reader', async () => {
    const calls = serveToys('reader');
    renderWithApp(<FitResultRoute />, '/a/demo/fits/7/toys', ROUTE);
    expect((await screen.findByRole('link', { name: 'Pseudo-experiments' })).getAttribute('aria-current')).toBe('page');
    const list = await screen.findByRole('table', { name: 'Toy runs of this fit' });
    expect(within(list).getAllByRole('row')).toHaveLength(3);
    expect(within(list).getByText('1,000 / 1,000')).toBeTruthy();
    expect(await screen.findByTestId('toy-p-value')).toBeTruthy();
    expect(calls.some((c) => c.url === '/api/analyses/demo/toys/3')).toBe(true);
    expect(screen.getByText(/inform the collaboration's own statistical review and approval; they do not replace it/)).toBeTruthy();
    expect(screen.queryByRole('form', { name: 'Run pseudo-experiments' })).toBeNull();
    expect(screen.queryByRole('button', { name: /Cancel/ })).toBeNull();
  });

  it('opens the run named in the address', async () => {
    serveToys('reader');
    renderWithApp(<FitResultRoute />, '/a/demo/fits/7/toys?run=2', ROUTE);
    expect(await screen.findByText('Stopped.', { selector: '[role="alert"]' })).toBeTruthy();
    expect(screen.queryByTestId('toy-p-value')).toBeNull();
  });

  it('sends an analyst’s request and shows the server’s refusal in its own words', async () => {
    const calls = serveToys('analyst', [], () => json(409, { error: { message: 'Toys need a converged fit; this one did not converge.', code: 'conflict' } }));
    const user = userEvent.setup();
    renderWithApp(<FitResultRoute />, '/a/demo/fits/7/toys', ROUTE);
    const form = await screen.findByRole('form', { name: 'Run pseudo-experiments' });
    expect(await screen.findByText('No pseudo-experiments yet')).toBeTruthy();
    const count = within(form).getByLabelText('Number of toys');
    await user.clear(count);
    await user.type(count, '2000');
    await user.click(within(form).getByLabelText(/The fit with μ held at a value/));
    await user.type(within(form).getByLabelText('Seed (optional)'), '7');
    await user.click(within(form).getByRole('button', { name: 'Run the toys' }));
    await waitFor(() => expect(calls.some((c) => c.method === 'POST' && c.url === '/api/analyses/demo/fits/7/toys')).toBe(true));
    expect(calls.find((c) => c.method === 'POST' && c.url.endsWith('/toys'))?.body).toEqual({ count: 2000, hypothesis: { kind: 'fixed-mu', mu: 0 }, seed: 7, label: '' });
    expect(await within(form).findByText('Toys need a converged fit; this one did not converge.')).toBeTruthy();
  });

  it('shows the server’s field issue beside its field', async () => {
    serveToys('analyst', [], () => json(400, { error: { message: 'The request is not valid.', issues: [{ path: ['count'], message: 'Too big: expected number to be <=20000' }] } }));
    const user = userEvent.setup();
    renderWithApp(<FitResultRoute />, '/a/demo/fits/7/toys', ROUTE);
    const form = await screen.findByRole('form', { name: 'Run pseudo-experiments' });
    await user.click(within(form).getByRole('button', { name: 'Run the toys' }));
    const field = within(form).getByLabelText('Number of toys');
    await waitFor(() => expect(field.getAttribute('aria-invalid')).toBe('true'));
    expect(within(form).getByText('Too big: expected number to be <=20000')).toBeTruthy();
  });
});
