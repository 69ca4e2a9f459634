// @vitest-environment happy-dom
import { afterEach, describe, expect, it, vi } from 'vitest';
import { cleanup, screen, waitFor } from '@testing-library/react';
import userEvent from '@testing-library/user-event';
import { FitResultRoute } from '../../src/app/routes/analysis/fit-result';
import { convergedResult, fitDetail, overview, type StoredFit } from './fit-fixtures';
import { json, renderWithApp, stubServer } from './helpers';
import { diagnosis } from './review-fixtures';

afterEach(() => {
  cleanup();
  vi.unstubAllGlobals();
});

const ROUTE = '/a/:slug/fits/:fitId/:tab?';

function serve(detail: ReturnType<typeof fitDetail>, role: 'analyst' | 'reader' = 'analyst') {
  return stubServer((method, url) => {
    if (url === '/api/analyses/demo') return json(200, overview(role));
    // the server serves the head and the large parts separately
    const { correlation, information, yields, gammas, ...head } = detail.result ?? ({} as NonNullable<StoredFit['result']>);
    const parts: Record<string, unknown> = { correlation, information, yields, gammas: gammas?.list };
    if (url === '/api/analyses/demo/fits/7' && method === 'GET') return json(200, { ...detail, result: detail.result && { ...head, gammas: { count: gammas.count, maxAbsPull: gammas.maxAbsPull } } });
    const part = url.match(/^\/api\/analyses\/demo\/fits\/7\/parts\/(\w+)$/);
    if (part && detail.result) return json(200, parts[part[1]]);
    if (url === '/api/analyses/demo/fits/7/cancel' && method === 'POST') return json(200, { ...detail, state: 'cancelled', result: null });
    if (url === '/api/analyses/demo/fits/7/diagnosis/jes') return json(200, diagnosis());
    if (url === '/api/analyses/demo/fits') return json(200, []);
    return undefined;
  });
}

describe('the fit result screen', () => {
  it('shows μ̂ with the asymmetric errors of the scan, the significance and the convergence line on the summary', async () => {
    serve(fitDetail());
    renderWithApp(<FitResultRoute />, '/a/demo/fits/7', ROUTE);
    expect(await screen.findByRole('heading', { name: /Observed, full impacts/ })).toBeTruthy();
    expect(screen.getByTitle(/Best-fit signal strength/).textContent).toBe('1.20');
    const interval = screen.getByTitle(/68 % interval from the profile-likelihood scan/);
    expect(interval.textContent).toContain('+0.33');
    expect(interval.textContent).toContain('−0.28');
    expect(screen.getByText(/4\.00 σ/)).toBeTruthy();
    // convergence and its warning are in view next to the numbers
    expect(screen.getAllByText('Converged').length).toBeGreaterThan(0);
    expect(screen.getByRole('button', { name: /1 warning/ })).toBeTruthy();
    // downloads of the whole result and of each table
    expect(screen.getByRole('link', { name: 'JSON' }).getAttribute('href')).toBe('/api/analyses/demo/fits/7/export?format=json');
    expect(screen.getByRole('link', { name: 'Nuisance parameters CSV' }).getAttribute('href')).toBe('/api/analyses/demo/fits/7/export?format=csv&table=nuisance');
  });

  it('shows a failed fit with its convergence report and no numbers', async () => {
    const failed = convergedResult({
      status: 'failed',
      summary: null,
      parameters: [],
      nuisance: [],
      correlation: null,
      convergence: { iterations: 200, decrement: 0.4, nll: null, parametersAtBound: ['jes'], clippedBins: [], conditionNumber: 3e12, warnings: [], failure: 'The Hessian is not positive definite at the last point.', seconds: 4 },
    });
    serve(fitDetail({ state: 'failed', failure: 'The fit did not converge.', headline: null, result: failed }));
    renderWithApp(<FitResultRoute />, '/a/demo/fits/7', ROUTE);
    expect(await screen.findByText('The Hessian is not positive definite at the last point.')).toBeTruthy();
    expect(screen.getByText('The fit did not converge.')).toBeTruthy();
    expect(screen.getAllByText('Not converged').length).toBeGreaterThan(0);
    expect(screen.queryByTitle(/Best-fit signal strength/)).toBeNull();
    expect(screen.queryByRole('navigation', { name: 'Fit result views' })).toBeNull();
    expect(screen.queryByRole('link', { name: /CSV/ })).toBeNull();
  });

  it('follows a running fit with a progress bar and lets an analyst cancel it', async () => {
    const calls = serve(fitDetail({ state: 'running', progress: 0.42, stage: 'impacts 12 of 40', result: null, headline: null }));
    const user = userEvent.setup();
    renderWithApp(<FitResultRoute />, '/a/demo/fits/7', ROUTE);
    const bar = await screen.findByRole('progressbar');
    expect(bar.getAttribute('aria-valuenow')).toBe('42');
    expect(bar.getAttribute('aria-valuetext')).toContain('impacts 12 of 40');
    await user.click(await screen.findByRole('button', { name: 'Cancel the fit' }));
    await waitFor(() => expect(calls.some((c) => c.method === 'POST' && c.url === '/api/analyses/demo/fits/7/cancel')).toBe(true));
  });

  it('offers no cancel button to a reader', async () => {
    serve(fitDetail({ state: 'queued', progress: 0, stage: '', result: null, headline: null }), 'reader');
    renderWithApp(<FitResultRoute />, '/a/demo/fits/7', ROUTE);
    await screen.findByRole('progressbar');
    await screen.findByText(/follows the job/);
    expect(screen.queryByRole('button', { name: 'Cancel the fit' })).toBeNull();
  });

  it('says that blinded signal-region data are withheld on the distributions', async () => {
    serve(fitDetail());
    renderWithApp(<FitResultRoute />, '/a/demo/fits/7/distributions', ROUTE);
    expect(await screen.findByText(/while the analysis is blinded/)).toBeTruthy();
    const charts = screen.getAllByRole('img').filter((e) => e.tagName.toLowerCase() === 'svg' && /distribution of/.test(e.getAttribute('aria-label') ?? ''));
    expect(charts.map((c) => c.getAttribute('aria-label'))).toEqual([
      expect.stringContaining('Post-fit distribution of SR'),
      expect.stringContaining('Post-fit distribution of CR'),
    ]);
    expect(charts[0].getAttribute('aria-label')).toContain('withheld');
    expect(charts[1].getAttribute('aria-label')).toContain('156 observed');
  });

  it('opens the diagnosis of the parameter named in the address, with the convergence report', async () => {
    const calls = serve(fitDetail());
    renderWithApp(<FitResultRoute />, '/a/demo/fits/7/diagnostics?parameter=jes', ROUTE);
    expect(await screen.findByRole('article', { name: 'Diagnosis of jes' })).toBeTruthy();
    expect(calls.some((c) => c.url === '/api/analyses/demo/fits/7/diagnosis/jes')).toBe(true);
    expect(screen.getByRole('link', { name: 'Diagnosis' }).getAttribute('aria-current')).toBe('page');
    expect(screen.getByRole('heading', { name: 'Convergence report' })).toBeTruthy();
  });

  it('says the first diagnosis of a parameter takes a while, and shows the refusal of a held parameter in the server’s words', async () => {
    stubServer((_method, url) => {
      if (url === '/api/analyses/demo') return json(200, overview('convener'));
      const { correlation, information, yields, gammas, ...head } = fitDetail().result!;
      void correlation;
      void information;
      void yields;
      if (url === '/api/analyses/demo/fits/7') return json(200, { ...fitDetail(), result: { ...head, gammas: { count: gammas.count, maxAbsPull: gammas.maxAbsPull } } });
      if (url === '/api/analyses/demo/fits/7/diagnosis/lumi') return json(409, { error: { message: 'lumi is held in this fit, so it has no diagnosis.', code: 'conflict' } });
      return undefined;
    });
    renderWithApp(<FitResultRoute />, '/a/demo/fits/7/diagnostics?parameter=lumi', ROUTE);
    expect(await screen.findByText(/refits the model at every point of its likelihood scan/)).toBeTruthy();
    expect(await screen.findByText('lumi is held in this fit, so it has no diagnosis.')).toBeTruthy();
  });
});
