// @vitest-environment happy-dom
import { afterEach, describe, expect, it, vi } from 'vitest';
import { cleanup, screen, waitFor, within } from '@testing-library/react';
import userEvent from '@testing-library/user-event';
import { fitOptionsSchema } from '@shared/schemas/fit';
import type { ModelVersion } from '@shared/schemas/fits';
import { FitsRoute } from '../../src/app/routes/analysis/fits';
import { FitResultRoute } from '../../src/app/routes/analysis/fit-result';
import { variantOptions, emptyVariant } from '../../src/features/fits/variant-draft';
import { variantInWords } from '../../src/lib/fits';
import { convergedResult, fitDetail, fitSummary, overview } from './fit-fixtures';
import { json, renderWithApp, stubServer } from './helpers';

afterEach(() => {
  cleanup();
  vi.unstubAllGlobals();
});

const version: ModelVersion = {
  number: 2,
  note: '',
  forApproval: false,
  sha256: 'ab'.repeat(32),
  createdAt: '2026-03-01T09:00:00Z',
  createdBy: 'Otto Brannholm',
  counts: { regions: 2, processes: 2, systematics: 2 },
  register: null,
  override: null,
};

const model = {
  regions: [
    { key: 'SR', label: 'Signal region', role: 'signal', observable: 'm', unit: 'GeV', edges: [0, 1], observed: null, withheld: true },
    { key: 'CR', label: 'Control region', role: 'control', observable: 'm', unit: 'GeV', edges: [0, 1], observed: [10], withheld: false },
  ],
  processes: [],
  floatingNorms: [{ key: 'k_bkg', label: 'Background', start: 1, min: 0, max: 5 }],
  templates: [],
};

function serve(blinding: 'blinded' | 'unblinded', post: (body: unknown) => Response) {
  return stubServer((method, url, body) => {
    if (url === '/api/analyses/demo') return json(200, overview('analyst', blinding));
    if (url === '/api/analyses/demo/fits' && method === 'GET') return json(200, []);
    if (url === '/api/analyses/demo/fits' && method === 'POST') return post(body);
    if (url === '/api/analyses/demo/versions') return json(200, [version]);
    if (url === '/api/analyses/demo/model') return json(200, model);
    if (url === '/api/analyses/demo/groups') return json(200, { groups: [{ id: 1, name: 'jets', position: 0, entries: ['jes', 'jer'] }], ungrouped: ['lumi'] });
    if (url === '/api/analyses/demo/review-sets') return json(200, []);
    return undefined;
  });
}

const POST = (c: { method: string; url: string }) => c.method === 'POST' && c.url === '/api/analyses/demo/fits';

describe('the variant of a fit in the start form', () => {
  it('sends held parameters, a held group, a split, the expected basis, hidden μ and regions left out', async () => {
    const calls = serve('blinded', () => json(202, fitSummary({ id: 8, state: 'queued', headline: null })));
    const user = userEvent.setup();
    renderWithApp(<FitsRoute />, '/a/demo/fits', '/a/:slug/fits');
    const form = await screen.findByRole('form', { name: 'Run a fit' });
    // while blinded, observed data in every region only with μ hidden
    const observed = within(form).getByRole('radio', { name: 'Observed data, all regions' }) as HTMLInputElement;
    expect(observed.disabled).toBe(true);
    await user.click(within(form).getByText(/Variant:/));
    expect((within(form).getByRole('radio', { name: /Measured background/ }) as HTMLInputElement).disabled).toBe(true);
    await user.click(within(form).getByRole('button', { name: 'Hold a parameter' }));
    await user.type(within(form).getByLabelText('Parameter held (1)'), 'jes');
    await user.click(within(form).getByRole('button', { name: 'Hold a parameter' }));
    await user.type(within(form).getByLabelText('Parameter held (2)'), 'k_bkg');
    await user.selectOptions(within(form).getByLabelText('Held at', { selector: '[id$="-1-a"]' }), 'value');
    await user.clear(within(form).getByLabelText('Value'));
    await user.type(within(form).getByLabelText('Value'), '1.2');
    await user.selectOptions(within(form).getByLabelText('Hold a group'), 'jets');
    await user.click(within(form).getByRole('button', { name: 'Split a systematic' }));
    await user.type(within(form).getByLabelText('Systematic split (1)'), 'lumi');
    await user.selectOptions(within(form).getByLabelText('By'), 'process');
    await user.click(within(form).getByRole('radio', { name: /Control regions/ }));
    await user.click(within(form).getByLabelText('Hide μ'));
    expect(observed.disabled).toBe(false);
    expect(observed.checked).toBe(true);
    await user.click(within(form).getByLabelText('Without template statistics'));
    await user.click(within(form).getByLabelText('CR (control)'));
    expect(within(form).getByText(/Variant:/).textContent).toContain('μ hidden');
    await user.click(within(form).getByRole('button', { name: 'Run the fit' }));
    await waitFor(() => expect(calls.some(POST)).toBe(true));
    const body = calls.find(POST)!.body as { options: Record<string, unknown> };
    expect(body.options).toMatchObject({
      dataset: 'observed',
      controlOnly: false,
      hold: [
        { parameter: 'jes', value: 'best' },
        { parameter: 'k_bkg', value: 1.2 },
      ],
      holdGroups: ['jets'],
      decorrelate: [{ parameter: 'lumi', by: 'process' }],
      expectedFrom: 'control',
      hiddenMu: true,
      templateStats: false,
      statOnly: false,
      breakdown: false,
      excludeRegions: ['CR'],
    });
    expect(fitOptionsSchema.safeParse(body.options).success).toBe(true);
  });

  it('shows a refusal of the server next to the field it names, and the whole message above', async () => {
    const message = 'The fit cannot be started: there is no parameter "no_such" (μ is "mu"; floating normalisations and systematics by their keys).';
    serve('unblinded', () => json(400, { error: { message, issues: [{ path: ['options', 'hold', 0, 'parameter'], message: 'there is no parameter "no_such"' }] } }));
    const user = userEvent.setup();
    renderWithApp(<FitsRoute />, '/a/demo/fits', '/a/:slug/fits');
    const form = await screen.findByRole('form', { name: 'Run a fit' });
    await user.click(within(form).getByText(/Variant:/));
    await user.click(within(form).getByRole('button', { name: 'Hold a parameter' }));
    await user.type(within(form).getByLabelText('Parameter held (1)'), 'no_such');
    await user.click(within(form).getByRole('button', { name: 'Run the fit' }));
    const field = within(form).getByLabelText('Parameter held (1)');
    await waitFor(() => expect(field.getAttribute('aria-invalid')).toBe('true'));
    expect(document.getElementById(field.getAttribute('aria-describedby')!)!.textContent).toBe('there is no parameter "no_such"');
    expect(within(form).getByRole('alert').textContent).toContain('See the fields below.');
  });

  it('refuses a held value that is not a number before sending', async () => {
    const calls = serve('unblinded', () => json(202, fitSummary()));
    const user = userEvent.setup();
    renderWithApp(<FitsRoute />, '/a/demo/fits', '/a/:slug/fits');
    const form = await screen.findByRole('form', { name: 'Run a fit' });
    await user.click(within(form).getByText(/Variant:/));
    await user.click(within(form).getByRole('button', { name: 'Hold a parameter' }));
    await user.type(within(form).getByLabelText('Parameter held (1)'), 'jes');
    await user.selectOptions(within(form).getByLabelText('Held at'), 'value');
    await user.clear(within(form).getByLabelText('Value'));
    await user.click(within(form).getByRole('button', { name: 'Run the fit' }));
    expect(await within(form).findByText('The held value must be a number.')).toBeTruthy();
    expect(calls.some(POST)).toBe(false);
  });
});

describe('a variant in words', () => {
  it('says nothing of the nominal fit and names every departure from it', () => {
    expect(variantInWords(fitOptionsSchema.parse({}))).toEqual([]);
    expect(
      variantInWords(
        fitOptionsSchema.parse({ hiddenMu: true, hold: [{ parameter: 'jes', value: 'best' }, { parameter: 'mu', value: 0 }], holdGroups: ['theory'], templateStats: false, decorrelate: [{ parameter: 'lumi', by: 'region' }], expectedFrom: 'control', breakdown: true, statOnly: true }),
      ),
    ).toEqual([
      'μ hidden',
      'statistics only',
      'jes held at its best fit',
      'mu held at 0',
      'group theory held',
      'without template statistics',
      'lumi split by region',
      'expected numbers from the background measured in the control regions',
      'breakdown by freezing',
    ]);
  });
  it('names a row left empty by its API path', () => {
    const { problems } = variantOptions({ ...emptyVariant, hold: [{ parameter: ' ', at: 'value', value: 'x' }], decorrelate: [{ parameter: '', by: 'region' }] });
    expect(Object.keys(problems).sort()).toEqual(['decorrelate.0.parameter', 'hold.0.parameter', 'hold.0.value']);
  });
});

describe('the fit page of a variant', () => {
  function serveFit(detail: ReturnType<typeof fitDetail>) {
    return stubServer((_method, url) => {
      if (url === '/api/analyses/demo') return json(200, overview('analyst'));
      const { correlation, information, yields, gammas, ...head } = detail.result!;
      if (url === '/api/analyses/demo/fits/7') return json(200, { ...detail, result: { ...head, gammas: { count: gammas.count, maxAbsPull: gammas.maxAbsPull } } });
      if (url === '/api/analyses/demo/fits/7/parts/correlation') return json(200, correlation);
      if (url === '/api/analyses/demo/fits/7/parts/yields') return json(200, yields);
      if (url === '/api/analyses/demo/fits/7/parts/information') return json(200, information);
      return undefined;
    });
  }

  it('says a fit hides μ, shows no μ̂ and offers no view that needs it', async () => {
    const options = fitOptionsSchema.parse({ dataset: 'observed', hiddenMu: true, impacts: 'none' });
    const result = convergedResult({ options, summary: null, groupedImpacts: [], scan: null });
    serveFit(fitDetail({ options, headline: null, result: { ...result, parameters: result.parameters.filter((p) => p.kind !== 'poi') } }));
    renderWithApp(<FitResultRoute />, '/a/demo/fits/7', '/a/:slug/fits/:fitId/:tab?');
    expect(await screen.findByText('Signal strength: hidden')).toBeTruthy();
    expect(screen.getByText(/Variant: μ hidden\. μ is hidden: this fit shows pulls, constraints and control-region numbers only\./)).toBeTruthy();
    expect(screen.queryByText('The fit failed: no result')).toBeNull();
    const tabs = within(screen.getByRole('navigation', { name: 'Fit result views' })).getAllByRole('link').map((l) => l.textContent);
    expect(tabs).toContain('Pulls');
    expect(tabs).not.toContain('Impact ranking');
    expect(tabs).not.toContain('Groups');
    expect(tabs).not.toContain('Pseudo-experiments');
    expect(screen.queryByTitle(/Best-fit signal strength/)).toBeNull();
  });

  it('links a check back to the diagnosis it was run from', async () => {
    const options = fitOptionsSchema.parse({ decorrelate: [{ parameter: 'halo_norm', by: 'region' }] });
    serveFit(fitDetail({ options, checkOf: { fitId: 3, parameter: 'halo_norm' }, result: convergedResult({ options }) }));
    renderWithApp(<FitResultRoute />, '/a/demo/fits/7', '/a/:slug/fits/:fitId/:tab?');
    const back = await screen.findByRole('link', { name: 'back to the diagnosis' });
    expect(back.getAttribute('href')).toBe('/a/demo/fits/3/diagnostics?parameter=halo_norm');
    expect(back.closest('p')!.textContent).toContain('A check of halo_norm from its diagnosis in fit #3');
  });

  it('shows what a variant held and the agreement of a split systematic on its summary', async () => {
    const options = fitOptionsSchema.parse({ decorrelate: [{ parameter: 'jes', by: 'region' }], hold: [{ parameter: 'lumi', value: 'best' }] });
    const result = convergedResult({
      options,
      variant: {
        held: [{ parameter: 'lumi', value: 0.1234, asked: 'best' }],
        statOnly: false,
        templateStats: true,
        expectedFrom: 'prefit',
        hiddenMu: false,
        decorrelation: [{ parameter: 'jes', by: 'region', parts: [{ name: 'jes/SR', where: 'SR', value: 0.1, error: 0.9 }, { name: 'jes/CR', where: 'CR', value: 0.2, error: 0.4 }], average: 0.18, chi2: 0.01, dof: 1, p: 0.92 }],
        breakdown: null,
      },
    });
    serveFit(fitDetail({ options, result }));
    renderWithApp(<FitResultRoute />, '/a/demo/fits/7', '/a/:slug/fits/:fitId/:tab?');
    const panel = (await screen.findByText('Variant of this fit')).closest('section')!;
    expect(within(panel).getByRole('list', { name: 'How this fit differs from the nominal fit' }).textContent).toContain('jes split by region');
    expect(panel.textContent).toContain('lumi = 0.1234 (its best fit)');
    const table = within(panel).getByRole('table', { name: 'Decorrelation tests' });
    expect(table.textContent).toContain('0.01 / 1');
    expect(table.textContent).not.toContain('parts disagree');
  });
});
