// @vitest-environment happy-dom
import { afterEach, describe, expect, it, vi } from 'vitest';
import { cleanup, screen, waitFor, within } from '@testing-library/react';
import userEvent from '@testing-library/user-event';
import type { HypothesisSummary, SignalHypotheses } from '@shared/schemas/signal-hypotheses';
import { useEditor } from '../../src/features/model/components/model-editor';
import { SignalHypothesesPanel } from '../../src/features/model/components/signal-hypotheses-panel';
import { resetCsrfToken } from '../../src/lib/api-client';
import { json, renderWithApp, stubServer } from './helpers';

afterEach(() => {
  cleanup();
  vi.unstubAllGlobals();
  resetCsrfToken();
});

const BASE = '/api/analyses/demo/signal-hypotheses';

function point(key: string, value: number, total: number, overrides: Partial<HypothesisSummary> = {}): HypothesisSummary {
  return {
    key,
    label: `m = ${value} GeV`,
    value,
    templates: [
      { region: 'SR-core', process: 'vireon', bins: 24, total: total * 0.7 },
      { region: 'SR-wide', process: 'vireon', bins: 12, total: total * 0.3 },
    ],
    total,
    effects: { scale: 0, shape: 12 },
    ...overrides,
  };
}

const LISTED: SignalHypotheses = {
  parameter: { name: 'mass', unit: 'GeV' },
  // not in the order of their value: the table sorts them
  points: [point('m1300', 1300, 60), point('m1100', 1100, 52.8), point('m1200', 1200, 57.25, { effects: { scale: 1, shape: 11 } })],
  issues: [{ hypothesis: 'm1200', message: 'replaces the template of region "SR-core", process "vireon", which systematic "flare_new" varies by shape: give that shape effect for this hypothesis too' }],
};

function Harness({ canEdit }: { canEdit: boolean }) {
  const editor = useEditor();
  return <SignalHypothesesPanel slug="demo" canEdit={canEdit} editor={editor} />;
}

const rowKeys = (table: HTMLElement) => within(table).getAllByRole('rowheader').map((h) => h.textContent);

describe('the signal hypotheses panel', () => {
  it('lists the hypotheses by value with the unit, what they replace, their yield and effects, and sorts by yield', async () => {
    stubServer((method, url) => (method === 'GET' && url === BASE ? json(200, LISTED) : undefined));
    renderWithApp(<Harness canEdit={false} />);
    const table = await screen.findByRole('table', { name: 'Signal hypotheses' });
    expect(rowKeys(table)).toEqual(['m = 1100 GeVm1100', 'm = 1200 GeVm1200', 'm = 1300 GeVm1300']);
    const row = within(table).getByRole('row', { name: /m1200/ });
    expect(within(row).getAllByRole('cell').map((c) => c.textContent)).toEqual(['1200 GeV', 'vireon in SR-core, SR-wide', '57.3 events', '11 shape, 1 scalelacks 1 effect']);
    expect(screen.getByRole('note').textContent).toMatch(/1 hypothesis no longer fit the model.*m1200: replaces the template of region "SR-core"/);

    // a number column sorts the largest first
    await userEvent.click(within(table).getByRole('button', { name: /Signal yield/ }));
    expect(rowKeys(table)).toEqual(['m = 1300 GeVm1300', 'm = 1200 GeVm1200', 'm = 1100 GeVm1100']);
    // a reader gets no controls
    expect(screen.queryByRole('button', { name: /Add hypothesis|Delete|Edit/ })).toBeNull();
  });

  it('asks an analyst for the parameter first, and saves it', async () => {
    let parameter: SignalHypotheses['parameter'] = null;
    const calls = stubServer((method, url, body) => {
      if (method === 'GET' && url === BASE) return json(200, { parameter, points: [], issues: [] });
      if (method === 'PUT' && url === '/api/analyses/demo/hypothesis-parameter') {
        parameter = body as typeof parameter;
        return json(200, body);
      }
    });
    renderWithApp(<Harness canEdit />);
    await userEvent.type(await screen.findByLabelText('Parameter'), 'mass');
    await userEvent.type(screen.getByLabelText('Unit'), 'GeV');
    expect(screen.queryByRole('button', { name: 'Add hypothesis' })).toBeNull();
    await userEvent.click(screen.getByRole('button', { name: 'Save parameter' }));
    await screen.findByRole('button', { name: 'Add hypothesis' });
    expect(calls.find((c) => c.method === 'PUT')!.body).toEqual({ name: 'mass', unit: 'GeV' });
    expect(screen.getByText("No signal hypotheses yet: the model's own signal templates are its one hypothesis.")).toBeTruthy();
  });

  it('previews a new hypothesis from its files, shows a refusal beside its field, and saves it', async () => {
    let refuse = true;
    const calls = stubServer((method, url) => {
      if (method === 'GET' && url === BASE) return json(200, LISTED);
      if (method === 'POST' && url.startsWith(BASE)) {
        if (refuse)
          return json(422, {
            error: { message: 'Nothing was saved. The signal hypothesis "m1250" does not fit the model: value: a second hypothesis with mass = 1200 ("m1200").', issues: [{ path: ['value'], message: 'a second hypothesis with mass = 1200 ("m1200")' }] },
          });
        return json(url.endsWith('save=1') ? 201 : 200, { saved: url.endsWith('save=1'), replaced: false, hypothesis: point('m1250', 1250, 58.4) });
      }
    });
    renderWithApp(<Harness canEdit />);
    await userEvent.click(await screen.findByRole('button', { name: 'Add hypothesis' }));
    const form = screen.getByRole('form', { name: 'Add a signal hypothesis' });
    await userEvent.type(within(form).getByLabelText('Key'), 'm1250');
    await userEvent.type(within(form).getByLabelText('Mass (GeV)'), '1200');
    await userEvent.upload(within(form).getByLabelText('Templates (CSV)'), new File(['region,process,bin,nominal\nSR-core,vireon,1,3\n'], 'm1250.csv', { type: 'text/csv' }));
    await userEvent.upload(within(form).getByLabelText('Effects (JSON, optional)'), new File(['[]'], 'effects.json', { type: 'application/json' }));
    await userEvent.click(within(form).getByRole('button', { name: 'Preview' }));
    expect(await within(form).findByText('a second hypothesis with mass = 1200 ("m1200")')).toBeTruthy();
    expect(within(form).getByLabelText('Mass (GeV)').getAttribute('aria-invalid')).toBe('true');

    refuse = false;
    await userEvent.clear(within(form).getByLabelText('Mass (GeV)'));
    await userEvent.type(within(form).getByLabelText('Mass (GeV)'), '1250');
    await userEvent.click(within(form).getByRole('button', { name: 'Preview' }));
    const preview = await within(form).findByRole('region', { name: 'Preview of the signal hypothesis' });
    expect(preview.textContent).toMatch(/Preview: adds m = 1250 GeV \(mass = 1250 GeV\)/);
    const sent = calls.filter((c) => c.method === 'POST').at(-1)!;
    expect(sent.url).toBe(`${BASE}?save=0`);
    const fields = sent.body as FormData;
    expect([fields.get('key'), fields.get('value'), fields.get('effects'), (fields.get('file') as File).name]).toEqual(['m1250', '1250', '[]', 'm1250.csv']);

    await userEvent.click(within(form).getByRole('button', { name: 'Save hypothesis' }));
    await waitFor(() => expect(screen.queryByRole('form', { name: 'Add a signal hypothesis' })).toBeNull());
    expect(calls.filter((c) => c.method === 'POST').at(-1)!.url).toBe(`${BASE}?save=1`);
  });
});
