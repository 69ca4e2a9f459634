// @vitest-environment happy-dom
import { afterEach, describe, expect, it, vi } from 'vitest';
import { cleanup, screen, waitFor, within } from '@testing-library/react';
import userEvent from '@testing-library/user-event';
import type { EntryDetail, ReplicaPreview, ShiftPrecisionView, SmoothPreview } from '@shared/schemas/register';
import { EffectsList } from '../../src/features/entry/components/effects-list';
import { ReplicaUpload } from '../../src/features/entry/components/replica-upload';
import { resetCsrfToken } from '../../src/lib/api-client';
import { json, renderWithApp, stubServer } from './helpers';

afterEach(() => {
  cleanup();
  vi.unstubAllGlobals();
  resetCsrfToken();
});

type Effect = EntryDetail['effects'][number];

const none = { edit: false, upload: false, submit: false, accept: false, sendBack: false, retire: false, reopen: false, reassign: false };

const side = (overrides: Partial<ShiftPrecisionView> = {}): ShiftPrecisionView => ({
  errors: [3, 2, 1, 0.5],
  source: 'estimated',
  againstZero: { chi2: 31.2, dof: 4, p: 2.8e-6 },
  againstFlat: { chi2: 2.1, dof: 3, p: 0.55, relativeShift: 0.032 },
  ...overrides,
});

function shape(overrides: Partial<Effect> = {}): Effect {
  return {
    id: 11,
    region: 'CR-shower',
    process: 'continuum',
    kind: 'shape',
    up: [105, 52, 26, 12.6],
    down: [96, 48, 24, 11.5],
    nominal: [100, 50, 25, 12],
    edges: [1000, 1100, 1200, 1300, 1400],
    warnings: [],
    precision: { up: side(), down: side({ againstZero: { chi2: 3.1, dof: 4, p: 0.54 }, againstFlat: { chi2: 1.2, dof: 3, p: 0.75, relativeShift: -0.041 } }) },
    smoothing: null,
    pruned: null,
    upload: { id: 4, filename: 'escale.csv', sha256: 'b'.repeat(64), createdAt: '2026-02-01T10:00:00Z' },
    stale: null,
    ...overrides,
  };
}

function entry(overrides: Partial<EntryDetail> = {}): EntryDetail {
  return {
    key: 'flare_escale',
    label: 'Flare energy scale',
    group: 'calorimetry',
    owner: { id: 3, name: 'Juno Feldspire', email: 'juno@lantern.example' },
    description: '',
    justification: '',
    references: [],
    state: 'draft',
    version: 4,
    createdAt: '2026-01-01T00:00:00Z',
    updatedAt: '2026-01-02T00:00:00Z',
    effects: [shape()],
    revisions: [],
    can: { ...none, upload: true, edit: true },
    ...overrides,
  } as EntryDetail;
}

const renderEffects = (e: EntryDetail) => renderWithApp(<EffectsList slug="demo" entry={e} regions={new Map()} processLabels={new Map()} />);

describe('the precision of a shape effect’s shifts', () => {
  it('draws each shift with its error bar and gives both χ² tests per side, with where the errors came from', () => {
    stubServer(() => undefined);
    renderEffects(entry());
    const card = screen.getByRole('article', { name: 'Effect on CR-shower × continuum' });
    const chart = within(card).getByRole('img', { name: /each shift with its error/ });
    // four bins, two sides: a bar and two caps each
    expect(chart.querySelectorAll('g[opacity] line')).toHaveLength(4 * 2 * 3);
    expect(chart.querySelectorAll('title')[0].textContent).toContain('Up shift error: ±3 events (±3.0 % of nominal)');
    const table = within(card).getByRole('table', { name: 'Precision of the shifts on CR-shower × continuum' });
    const [up, down] = within(table).getAllByRole('row').slice(1);
    expect(up.textContent).toMatch(/^Upχ² 31\.2 \/ 4p = 2\.80 × 10⁻⁶a shift beyond noiseχ² 2\.1 \/ 3p = 0\.550flat within noise\(best flat shift \+3\.20 %\)$/);
    expect(down.textContent).toMatch(/χ² 3\.1 \/ 4p = 0\.540within noise.*best flat shift −4\.10 %/);
    expect(within(card).getByText(/estimated from the template variance v as √\(2v\) per bin, as the file gave no shift variance/)).toBeTruthy();
  });

  it('says so when the file gave the errors, and names a shape within its noise', () => {
    stubServer(() => undefined);
    const message = 'The shape is not significant over its statistical noise against a flat shift (up: χ² 2.1 for 3 dof, p = 0.55; down: χ² 1.2 for 3 dof, p = 0.75): smooth it, or enter it as a scale effect.';
    renderEffects(entry({ effects: [shape({ precision: { up: side({ source: 'given' }), down: side({ source: 'given' }) }, warnings: [{ code: 'within-noise', message }] })] }));
    expect(screen.getByText(/Errors of the shifts given in the file/)).toBeTruthy();
    const warning = within(screen.getByRole('list', { name: 'Warnings' })).getByRole('listitem');
    expect(warning.textContent).toBe(`Within noise: ${message}`);
  });
});

describe('smoothing a shape effect', () => {
  const url = '/api/analyses/demo/entries/flare_escale/effects/11/smooth';
  const preview = (saved: boolean, method = 'local-regression'): SmoothPreview => ({
    saved,
    method,
    precision: null,
    nominal: [100, 50, 25, 12],
    edges: [1000, 1100, 1200, 1300, 1400],
    before: { up: [105, 52, 26, 12.6], down: [96, 48, 24, 11.5] },
    after: { up: [104, 52.2, 26.1, 12.5], down: [96.2, 48, 24.1, 11.5] },
    warnings: [],
  });

  it('previews the chosen method before and after on both sides, then saves the same request', async () => {
    const user = userEvent.setup();
    const calls = stubServer((method, u, body) => (method === 'POST' && u === url ? json(200, preview((body as { save: boolean }).save)) : undefined));
    renderEffects(entry());
    await user.click(screen.getByRole('button', { name: 'Smooth CR-shower × continuum…' }));
    const panel = screen.getByRole('region', { name: 'Smooth CR-shower × continuum' });
    // the focus moves into the form
    expect(document.activeElement).toBe(within(panel).getByRole('radio', { name: 'Running medians with Hanning' }));
    await user.click(within(panel).getByRole('radio', { name: 'Local regression' }));
    await user.clear(within(panel).getByLabelText('Window (bins)'));
    await user.type(within(panel).getByLabelText('Window (bins)'), '3');
    await user.click(within(panel).getByRole('button', { name: 'Preview the smoothing of CR-shower × continuum' }));

    const comparison = await within(panel).findByRole('region', { name: 'Before and after smoothing' });
    expect(within(comparison).getByRole('img', { name: /^Up shift relative to the nominal per bin, as it is now and smoothed: largest 5\.00 % now, 4\.40 % smoothed$/ })).toBeTruthy();
    expect(within(comparison).getByRole('img', { name: /^Down shift/ })).toBeTruthy();
    expect(calls.filter((c) => c.url === url).map((c) => c.body)).toEqual([{ method: 'local-regression', window: 3, iterations: 2, save: false }]);

    await user.click(within(panel).getByRole('button', { name: 'Save the smoothed effect' }));
    await screen.findByText('Saved, smoothed with local regression over 3 bins with 2 robustness iterations, as a new revision.');
    expect(calls.filter((c) => c.url === url).map((c) => c.body)).toEqual([
      { method: 'local-regression', window: 3, iterations: 2, save: false },
      { method: 'local-regression', window: 3, iterations: 2, save: true },
    ]);
    expect(screen.queryByRole('region', { name: 'Smooth CR-shower × continuum' })).toBeNull();
  });

  it('shows the server’s refusal and puts its field message on the field', async () => {
    const user = userEvent.setup();
    const message = 'The window of 9 bins is larger than region "CR-shower", which has 4 bins with a nominal above 0';
    stubServer((method, u) => (method === 'POST' && u === url ? json(422, { error: { message, issues: [{ path: ['window'], message: 'at most 4' }] } }) : undefined));
    renderEffects(entry());
    await user.click(screen.getByRole('button', { name: 'Smooth CR-shower × continuum…' }));
    await user.click(screen.getByRole('radio', { name: 'Local regression' }));
    await user.clear(screen.getByLabelText('Window (bins)'));
    await user.type(screen.getByLabelText('Window (bins)'), '9');
    await user.click(screen.getByRole('button', { name: /^Preview the smoothing/ }));
    expect((await screen.findByRole('alert')).textContent).toContain(message);
    const field = screen.getByLabelText('Window (bins)');
    expect(field.getAttribute('aria-invalid')).toBe('true');
    expect(document.getElementById(field.getAttribute('aria-describedby')!)?.textContent).toBe('at most 4');
    expect(screen.queryByRole('button', { name: 'Save the smoothed effect' })).toBeNull();
  });

  it('checks the window before sending it', async () => {
    const user = userEvent.setup();
    const calls = stubServer(() => undefined);
    renderEffects(entry());
    await user.click(screen.getByRole('button', { name: 'Smooth CR-shower × continuum…' }));
    await user.click(screen.getByRole('radio', { name: 'Local regression' }));
    await user.clear(screen.getByLabelText('Window (bins)'));
    await user.type(screen.getByLabelText('Window (bins)'), '2');
    await user.click(screen.getByRole('button', { name: /^Preview the smoothing/ }));
    expect(screen.getByLabelText('Window (bins)').getAttribute('aria-invalid')).toBe('true');
    expect(calls.some((c) => c.url === url)).toBe(false);
  });

  it('says how a smoothed effect was smoothed and restores the upload', async () => {
    const user = userEvent.setup();
    const calls = stubServer((method, u) => (method === 'POST' && u === url ? json(200, preview(true, 'restore')) : undefined));
    renderEffects(entry({ effects: [shape({ smoothing: { method: 'median-hanning', params: {}, by: 'Juno Feldspire', at: '2026-03-02T09:30:00Z' } })] }));
    const card = screen.getByRole('article', { name: 'Effect on CR-shower × continuum' });
    expect(within(card).getByText(/with running medians of three with Hanning by Juno Feldspire/)).toBeTruthy();
    await user.click(within(card).getByRole('button', { name: 'Restore the upload of CR-shower × continuum' }));
    await user.click(within(card).getByRole('button', { name: 'Restore' }));
    await screen.findByText('The variation as uploaded is back, as a new revision.');
    expect(calls.filter((c) => c.url === url).map((c) => c.body)).toEqual([{ method: 'restore', save: true }]);
  });

  it('offers smoothing only on shape effects, and only to those who may upload', () => {
    stubServer(() => undefined);
    const scale = shape({ id: 12, kind: 'scale', up: 1.04, down: 0.97, precision: null, process: 'showerpair' });
    renderEffects(entry({ effects: [shape({ smoothing: { method: 'local-regression', params: { window: 5, iterations: 2 }, by: 'Juno Feldspire', at: '2026-03-02T09:30:00Z' } }), scale] }));
    expect(screen.getAllByRole('button', { name: /^Smooth / })).toHaveLength(1);
    cleanup();
    renderEffects(entry({ can: none, effects: [shape({ smoothing: { method: 'local-regression', params: { window: 5, iterations: 2 }, by: 'Juno Feldspire', at: '2026-03-02T09:30:00Z' } }), scale] }));
    expect(screen.queryByRole('button', { name: /^Smooth / })).toBeNull();
    expect(screen.queryByRole('button', { name: /^Restore/ })).toBeNull();
    expect(screen.getByText(/Smoothed with local regression over 5 bins with 2 robustness iterations by Juno Feldspire/)).toBeTruthy();
  });
});

describe('alternative templates', () => {
  const url = '/api/analyses/demo/entries/flare_escale/replicas';
  const preview = (saved: boolean): ReplicaPreview => ({
    saved,
    filename: 'scales.csv',
    sha256: 'c'.repeat(64),
    method: 'components',
    region: 'CR-shower',
    process: 'continuum',
    templates: ['alt1', 'alt2', 'alt3'],
    nominal: [100, 50],
    edges: [1000, 1100, 1200],
    effects: [
      { entry: 'flare_escale', created: false, up: [104, 51], down: [96, 49], fraction: 0.82, warnings: [] },
      { entry: 'flare_escale_pc2', created: true, up: [101, 49], down: [99, 51], fraction: 0.12, warnings: [] },
    ],
    kept: 0.94,
  });
  const file = () => new File(['region,process,template,bin,yield\n'], 'scales.csv', { type: 'text/csv' });

  it('previews every effect to be written with its entry and share of the variance, then saves the same file and options', async () => {
    const user = userEvent.setup();
    const calls = stubServer((method, u) => {
      if (method === 'POST' && u === `${url}?save=0`) return json(200, preview(false));
      if (method === 'POST' && u === `${url}?save=1`) return json(201, preview(true));
    });
    renderWithApp(<ReplicaUpload slug="demo" entryKey="flare_escale" regions={new Map()} processLabels={new Map()} />);
    await user.upload(screen.getByLabelText('Alternative templates (CSV or JSON)'), file());
    await user.click(screen.getByRole('radio', { name: 'Principal components' }));
    await user.clear(screen.getByLabelText(/Keep components up to/));
    await user.type(screen.getByLabelText(/Keep components up to/), '90');
    await user.click(screen.getByRole('button', { name: 'Preview the alternative templates' }));

    const region = await screen.findByRole('region', { name: 'Preview of the alternative templates' });
    expect(within(region).getByText(/2 components kept, holding/).textContent).toContain('94.0 %');
    const first = within(region).getByRole('article', { name: 'Effect on CR-shower × continuum for flare_escale' });
    expect(within(first).getByText('this entry')).toBeTruthy();
    expect(within(first).getByText('component 1: 82.0 % of the variance')).toBeTruthy();
    const second = within(region).getByRole('article', { name: 'Effect on CR-shower × continuum for flare_escale_pc2' });
    expect(within(second).getByText('new entry flare_escale_pc2')).toBeTruthy();
    expect(within(second).getByText('component 2: 12.0 % of the variance')).toBeTruthy();

    await user.click(screen.getByRole('button', { name: 'Save 2 effects' }));
    const status = await screen.findByRole('status');
    expect(status.textContent).toContain('Saved the principal components of the alternatives in scales.csv on CR-shower × continuum');
    expect(within(status).getByRole('link', { name: 'flare_escale_pc2' }).getAttribute('href')).toBe('/a/demo/entries/flare_escale_pc2');
    const posts = calls.filter((c) => c.url.startsWith(url));
    expect(posts.map((c) => c.url)).toEqual([`${url}?save=0`, `${url}?save=1`]);
    for (const p of posts) {
      const form = p.body as FormData;
      expect((form.get('file') as File).name).toBe('scales.csv');
      expect(JSON.parse(String(form.get('options')))).toEqual({ method: 'components', keep: 0.9 });
    }
    expect(screen.queryByRole('region', { name: 'Preview of the alternative templates' })).toBeNull();
  });

  it('sends the envelope by default, and refuses a kept share out of range before sending', async () => {
    const user = userEvent.setup();
    const calls = stubServer((method, u) => (method === 'POST' && u === `${url}?save=0` ? json(200, { ...preview(false), method: 'envelope', kept: null, effects: [{ ...preview(false).effects[0], fraction: null }] }) : undefined));
    renderWithApp(<ReplicaUpload slug="demo" entryKey="flare_escale" regions={new Map()} processLabels={new Map()} />);
    await user.upload(screen.getByLabelText('Alternative templates (CSV or JSON)'), file());
    await user.click(screen.getByRole('radio', { name: 'Principal components' }));
    await user.clear(screen.getByLabelText(/Keep components up to/));
    await user.type(screen.getByLabelText(/Keep components up to/), '0');
    await user.click(screen.getByRole('button', { name: 'Preview the alternative templates' }));
    expect(screen.getByLabelText(/Keep components up to/).getAttribute('aria-invalid')).toBe('true');
    expect(calls.some((c) => c.url.startsWith(url))).toBe(false);

    await user.click(screen.getByRole('radio', { name: 'Envelope' }));
    await user.click(screen.getByRole('button', { name: 'Preview the alternative templates' }));
    await screen.findByRole('region', { name: 'Preview of the alternative templates' });
    expect(JSON.parse(String((calls.find((c) => c.url.startsWith(url))!.body as FormData).get('options')))).toEqual({ method: 'envelope' });
  });

  it('shows a refused file in the server’s words, naming row and column', async () => {
    const user = userEvent.setup();
    const message = 'Nothing was saved. "scales.csv" has 1 problem: Row 4, column "bin": bin 3 is outside region "CR-shower" (2 bins).';
    stubServer((method) => (method === 'POST' ? json(422, { error: { message } }) : undefined));
    renderWithApp(<ReplicaUpload slug="demo" entryKey="flare_escale" regions={new Map()} processLabels={new Map()} />);
    await user.upload(screen.getByLabelText('Alternative templates (CSV or JSON)'), file());
    await user.click(screen.getByRole('button', { name: 'Preview the alternative templates' }));
    await waitFor(() => expect(screen.getByRole('alert').textContent).toContain('Row 4, column "bin"'));
    expect(screen.queryByRole('button', { name: /^Save/ })).toBeNull();
  });
});
