// @vitest-environment happy-dom
import { afterEach, describe, expect, it, vi } from 'vitest';
import { cleanup, screen, within } from '@testing-library/react';
import type { EntrySummary } from '@shared/schemas/api';
import type { GroupsView } from '@shared/schemas/register';
import { GroupsBoard } from '../../src/features/groups/components/groups-board';
import { withEntryMoved } from '../../src/features/groups/api/move-entry';
import { renderWithApp, stubServer } from './helpers';

afterEach(() => {
  cleanup();
  vi.unstubAllGlobals();
});

const view: GroupsView = {
  groups: [
    { id: 2, name: 'theory', position: 2, entries: ['scale_mu_r'] },
    { id: 1, name: 'calorimetry', position: 1, entries: ['flare_escale', 'calo_leak'] },
  ],
  ungrouped: ['lumi'],
};

const summary = (key: string): EntrySummary => ({
  key,
  label: key.replace('_', ' '),
  group: null,
  owner: null,
  state: 'draft',
  processes: [],
  regions: [],
  kinds: [],
  largestEffectPct: null,
  warnings: 0,
  openQuestions: 0,
  pruning: { candidates: 0, pruned: 0 },
  updatedAt: '2026-01-01T00:00:00Z',
});

describe('moving an entry between groups', () => {
  it('takes it out of its group and appends it to the new one', () => {
    const moved = withEntryMoved(view, 'flare_escale', 2);
    expect(moved.groups.find((g) => g.id === 1)!.entries).toEqual(['calo_leak']);
    expect(moved.groups.find((g) => g.id === 2)!.entries).toEqual(['scale_mu_r', 'flare_escale']);
    expect(moved.ungrouped).toEqual(['lumi']);
    expect(withEntryMoved(view, 'lumi', 1).ungrouped).toEqual([]);
    expect(withEntryMoved(view, 'calo_leak', null).ungrouped).toEqual(['lumi', 'calo_leak']);
  });
});

describe('the groups board', () => {
  const entries = ['scale_mu_r', 'flare_escale', 'calo_leak', 'lumi'].map(summary);

  it('shows a column per group in order, then the ungrouped entries, with drag handles and group actions for editors', () => {
    stubServer(() => undefined);
    renderWithApp(<GroupsBoard slug="demo" view={view} entries={entries} editable />);
    const headings = screen.getAllByRole('heading', { level: 2 }).map((h) => h.textContent);
    expect(headings).toEqual(['calorimetry', 'theory', 'Ungrouped']);
    const cal = screen.getByRole('list', { name: 'Entries in calorimetry' });
    expect(within(cal).getAllByRole('listitem')).toHaveLength(2);
    const handle = screen.getByRole('button', { name: /^Move flare_escale/ });
    // the keyboard sensor's instructions are tied to every handle
    expect(handle.getAttribute('aria-describedby')).toBeTruthy();
    expect(screen.getByRole('button', { name: 'Rename group theory' })).toBeTruthy();
    expect(screen.getByRole('form', { name: 'Create a group' })).toBeTruthy();
  });

  it('is read-only for roles that may not arrange groups', () => {
    stubServer(() => undefined);
    renderWithApp(<GroupsBoard slug="demo" view={view} entries={entries} editable={false} />);
    expect(screen.queryByRole('button', { name: /^Move / })).toBeNull();
    expect(screen.queryByRole('button', { name: /^Rename group/ })).toBeNull();
    expect(screen.queryByRole('form', { name: 'Create a group' })).toBeNull();
    expect(screen.getByRole('link', { name: 'lumi' }).getAttribute('href')).toBe('/a/demo/entries/lumi');
  });
});
