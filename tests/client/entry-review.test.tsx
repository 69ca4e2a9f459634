// @vitest-environment happy-dom
import { afterEach, describe, expect, it, vi } from 'vitest';
import { cleanup, screen } from '@testing-library/react';
import userEvent from '@testing-library/user-event';
import type { EntryDetail } from '@shared/schemas/register';
import { ReviewPanel } from '../../src/features/entry/components/review-panel';
import { EntryMetadata } from '../../src/features/entry/components/entry-metadata';
import { resetCsrfToken } from '../../src/lib/api-client';
import { json, renderWithApp, stubServer } from './helpers';

afterEach(() => {
  cleanup();
  vi.unstubAllGlobals();
  resetCsrfToken();
});

const none = { edit: false, upload: false, submit: false, accept: false, sendBack: false, retire: false, reopen: false, reassign: false };

function entry(overrides: Partial<EntryDetail> = {}): EntryDetail {
  return {
    key: 'flare_escale',
    label: 'Flare energy scale',
    group: 'calorimetry',
    owner: { id: 3, name: 'Juno Feldspire', email: 'juno@lantern.example' },
    description: 'Calibration of the flare energy response.',
    justification: '',
    references: [],
    state: 'submitted',
    version: 4,
    createdAt: '2026-01-01T00:00:00Z',
    updatedAt: '2026-01-02T00:00:00Z',
    effects: [],
    revisions: [],
    can: none,
    impactCheck: null,
    ...overrides,
  };
}

describe('reviewing an entry', () => {
  it('offers only the steps the server allows for this entry', () => {
    stubServer(() => undefined);
    renderWithApp(<ReviewPanel slug="demo" entry={entry({ can: { ...none, accept: true, sendBack: true } })} />);
    expect(screen.getByRole('button', { name: 'Accept' })).toBeTruthy();
    expect(screen.getByRole('button', { name: 'Send back' })).toBeTruthy();
    expect(screen.queryByRole('button', { name: 'Submit for review' })).toBeNull();
    expect(screen.queryByRole('button', { name: 'Retire' })).toBeNull();
  });

  it('will not send an entry back without a comment, and sends the comment with it', async () => {
    const user = userEvent.setup();
    const calls = stubServer((method, url) =>
      method === 'POST' && url === '/api/analyses/demo/entries/flare_escale/review' ? json(200, entry({ state: 'sent_back' })) : undefined,
    );
    renderWithApp(<ReviewPanel slug="demo" entry={entry({ can: { ...none, accept: true, sendBack: true } })} />);
    await user.click(screen.getByRole('button', { name: 'Send back' }));
    expect(screen.getByText(/Say why the entry goes back/)).toBeTruthy();
    expect(calls.some((c) => c.method === 'POST')).toBe(false);

    await user.type(screen.getByLabelText(/Comment/), 'The down variation is missing in SR-core.');
    await user.click(screen.getByRole('button', { name: 'Send back' }));
    await vi.waitFor(() => expect(calls.find((c) => c.url.endsWith('/review'))?.body).toEqual({ action: 'send_back', comment: 'The down variation is missing in SR-core.' }));
  });
});

describe('editing an entry', () => {
  it('sends the version it started from and, when someone else saved first, says so and shows their version', async () => {
    const user = userEvent.setup();
    const calls = stubServer((method, url) => {
      if (method === 'PATCH' && url === '/api/analyses/demo/entries/flare_escale')
        return json(409, { error: { message: 'Someone else changed "flare_escale" since you opened it (version 5, yours 4).', code: 'conflict' } });
    });
    renderWithApp(<EntryMetadata slug="demo" entry={entry({ can: { ...none, edit: true } })} members={[]} groups={['calorimetry']} />);
    await user.click(screen.getByRole('button', { name: 'Edit details' }));
    await user.type(screen.getByLabelText('Justification'), 'From the test-beam calibration.');
    await user.click(screen.getByRole('button', { name: 'Save changes' }));

    const alert = await screen.findByRole('alert');
    expect(alert.textContent).toContain('Someone else changed this entry');
    expect(alert.textContent).toContain('version 5, yours 4');
    const patch = calls.find((c) => c.method === 'PATCH')!;
    expect(patch.body).toMatchObject({ version: 4, justification: 'From the test-beam calibration.' });
    // a contact may not reassign: no owner is sent and no owner field is offered
    expect(patch.body).not.toHaveProperty('ownerId');
  });
});
