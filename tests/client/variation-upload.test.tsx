// @vitest-environment happy-dom
import { afterEach, describe, expect, it, vi } from 'vitest';
import { cleanup, screen, within } from '@testing-library/react';
import userEvent from '@testing-library/user-event';
import type { VariationPreview } from '@shared/schemas/register';
import { VariationUpload } from '../../src/features/entry/components/variation-upload';
import { resetCsrfToken } from '../../src/lib/api-client';
import { json, renderWithApp, stubServer } from './helpers';

afterEach(() => {
  cleanup();
  vi.unstubAllGlobals();
  resetCsrfToken();
});

const preview = (saved: boolean): VariationPreview => ({
  saved,
  filename: 'escale.csv',
  sha256: 'a'.repeat(64),
  effects: [
    {
      region: 'CR-shower',
      process: 'continuum',
      kind: 'shape',
      up: [105, 52],
      down: [95, 48],
      nominal: [100, 50],
      edges: [1000, 1100, 1200],
      warnings: [{ code: 'same-side', message: 'Up and down lie on the same side of the nominal in bin 2.', bins: [1] }],
      transformed: ['mirrored'],
      precision: null,
      replaces: true,
    },
  ],
});

const url = '/api/analyses/demo/entries/flare_escale/variations';

function setup(handler: Parameters<typeof stubServer>[0]) {
  const calls = stubServer(handler);
  renderWithApp(<VariationUpload slug="demo" entryKey="flare_escale" regions={new Map()} processLabels={new Map()} />);
  return calls;
}

const file = () => new File(['region,process,kind,bin,up,down\n'], 'escale.csv', { type: 'text/csv' });

describe('uploading variations', () => {
  it('previews first, writing nothing, then saves the same file with the same options', async () => {
    const user = userEvent.setup();
    const calls = setup((method, u) => {
      if (method === 'POST' && u === `${url}?save=0`) return json(200, preview(false));
      if (method === 'POST' && u === `${url}?save=1`) return json(201, preview(true));
    });
    await user.upload(screen.getByLabelText('Variation file (CSV or JSON)'), file());
    await user.click(screen.getByLabelText('Mirror one-sided variations'));
    await user.click(screen.getByRole('button', { name: 'Preview' }));

    const region = await screen.findByRole('region', { name: 'Preview of the upload' });
    expect(within(region).getByText('replaces existing')).toBeTruthy();
    expect(within(region).getByText('mirrored')).toBeTruthy();
    expect(within(region).getByText(/same side of the nominal in bin 2/)).toBeTruthy();
    expect(calls.filter((c) => c.url.startsWith(url)).map((c) => c.url)).toEqual([`${url}?save=0`]);

    await user.click(screen.getByRole('button', { name: 'Save 1 effect' }));
    await screen.findByText(/Saved 1 effect from escale\.csv/);
    const posts = calls.filter((c) => c.url.startsWith(url));
    expect(posts.map((c) => c.url)).toEqual([`${url}?save=0`, `${url}?save=1`]);
    for (const p of posts) {
      const form = p.body as FormData;
      expect((form.get('file') as File).name).toBe('escale.csv');
      expect(JSON.parse(String(form.get('options')))).toEqual({ mirror: true, symmetrise: false, flatToScale: false });
    }
    expect(screen.queryByRole('region', { name: 'Preview of the upload' })).toBeNull();
  });

  it('shows the refusal in the server’s words and offers no Save', async () => {
    const user = userEvent.setup();
    const message = 'Nothing was saved. "escale.csv" has 1 problem: Row 3, column "up": "abc" is not a finite number.';
    setup((method) => (method === 'POST' ? json(422, { error: { message } }) : undefined));
    await user.upload(screen.getByLabelText('Variation file (CSV or JSON)'), file());
    await user.click(screen.getByRole('button', { name: 'Preview' }));
    const alert = await screen.findByRole('alert');
    expect(alert.textContent).toContain('Row 3, column "up": "abc" is not a finite number');
    expect(screen.queryByRole('button', { name: /^Save/ })).toBeNull();
  });

  it('drops a preview when an option changes, so what is saved is what was previewed', async () => {
    const user = userEvent.setup();
    const calls = setup((method, u) => (method === 'POST' && u === `${url}?save=0` ? json(200, preview(false)) : undefined));
    await user.upload(screen.getByLabelText('Variation file (CSV or JSON)'), file());
    await user.click(screen.getByRole('button', { name: 'Preview' }));
    await screen.findByRole('region', { name: 'Preview of the upload' });
    await user.click(screen.getByLabelText('Symmetrise two-sided variations'));
    expect(screen.queryByRole('region', { name: 'Preview of the upload' })).toBeNull();
    expect(screen.queryByRole('button', { name: /^Save/ })).toBeNull();
    expect(calls.some((c) => c.url.endsWith('save=1'))).toBe(false);
  });
});
