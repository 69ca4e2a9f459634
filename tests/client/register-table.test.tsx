// @vitest-environment happy-dom
import { afterEach, describe, expect, it, vi } from 'vitest';
import { cleanup, render, screen, within } from '@testing-library/react';
import userEvent from '@testing-library/user-event';
import { createMemoryRouter, RouterProvider } from 'react-router';
import type { EntrySummary } from '@shared/schemas/api';
import { RegisterTable } from '../../src/features/register/components/register-table';

afterEach(cleanup);

function entry(overrides: Partial<EntrySummary>): EntrySummary {
  return {
    key: 'lumi',
    label: 'Integrated luminosity',
    group: 'luminosity',
    owner: { id: 1, name: 'Otto Brannholm', email: 'otto@lantern.example' },
    state: 'accepted',
    processes: ['halo'],
    regions: ['SR'],
    kinds: ['scale'],
    largestEffectPct: 2.1,
    warnings: 0,
    openQuestions: 0,
    pruning: { candidates: 0, pruned: 0 },
    updatedAt: '2026-01-01T00:00:00Z',
    ...overrides,
  };
}

const entries = [
  entry({}),
  entry({ key: 'flare_escale', label: 'Flare energy scale', group: 'calorimetry', largestEffectPct: 5.5, state: 'submitted', warnings: 2 }),
  entry({ key: 'halo_veto', label: 'Halo veto efficiency', group: 'tracking', largestEffectPct: null, owner: null, state: 'draft' }),
];

function renderTable() {
  const router = createMemoryRouter([{ path: '/', element: <RegisterTable slug="demo" entries={entries} /> }]);
  render(<RouterProvider router={router} />);
  return screen.getByRole('table', { name: 'Register entries' });
}

function keysInOrder(table: HTMLElement): string[] {
  return within(table)
    .getAllByRole('row')
    .slice(1)
    .map((r) => within(r).getAllByRole('cell')[0].textContent ?? '');
}

describe('the register table', () => {
  it('lists every entry sorted by key, with a link to each entry', () => {
    const table = renderTable();
    expect(keysInOrder(table)).toEqual(['flare_escale', 'halo_veto', 'lumi']);
    expect(within(table).getByRole('link', { name: 'lumi' }).getAttribute('href')).toBe('/a/demo/entries/lumi');
    expect(within(table).getByRole('columnheader', { name: /Key/ }).getAttribute('aria-sort')).toBe('ascending');
  });

  it('sorts by largest effect when its header is pressed, entries without variations last', async () => {
    const user = userEvent.setup();
    const table = renderTable();
    await user.click(within(table).getByRole('button', { name: /Largest effect/ }));
    const header = within(table).getByRole('columnheader', { name: /Largest effect/ });
    const order = keysInOrder(table);
    expect(order[order.length - 1]).toBe('halo_veto');
    expect(header.getAttribute('aria-sort')).not.toBe('none');
    expect(new Set(order.slice(0, 2))).toEqual(new Set(['lumi', 'flare_escale']));
  });

  it('filters by any text of an entry: group, owner or state', async () => {
    const user = userEvent.setup();
    const table = renderTable();
    const filter = screen.getByLabelText('Filter entries');
    await user.type(filter, 'calorimetry');
    expect(keysInOrder(table)).toEqual(['flare_escale']);
    await user.clear(filter);
    await user.type(filter, 'brannholm');
    expect(keysInOrder(table)).toEqual(['flare_escale', 'lumi']);
    await user.clear(filter);
    await user.type(filter, 'nothing like this');
    expect(within(table).getByText(/No entry matches/)).toBeTruthy();
  });

  it('filters by group, owner and state with the selects, "no group" and "unassigned" included', async () => {
    const user = userEvent.setup();
    const table = renderTable();
    await user.selectOptions(screen.getByLabelText('Group', { selector: 'select' }), 'calorimetry');
    expect(keysInOrder(table)).toEqual(['flare_escale']);
    await user.selectOptions(screen.getByLabelText('Group', { selector: 'select' }), 'Any');
    await user.selectOptions(screen.getByLabelText('Owner', { selector: 'select' }), '(unassigned)');
    expect(keysInOrder(table)).toEqual(['halo_veto']);
    await user.selectOptions(screen.getByLabelText('Owner', { selector: 'select' }), 'Any');
    await user.selectOptions(screen.getByLabelText('State', { selector: 'select' }), 'Accepted');
    expect(keysInOrder(table)).toEqual(['lumi']);
    expect(screen.getByText('Showing 1 of 3 entries')).toBeTruthy();
  });

  it('hides and shows columns from the column menu', async () => {
    const user = userEvent.setup();
    const table = renderTable();
    expect(within(table).getByRole('columnheader', { name: /Regions/ })).toBeTruthy();
    await user.click(screen.getByRole('checkbox', { name: 'Show column Regions' }));
    expect(within(table).queryByRole('columnheader', { name: /Regions/ })).toBeNull();
    expect(within(table).getAllByRole('row')[1].querySelectorAll('td')).toHaveLength(8);
    await user.click(screen.getByRole('checkbox', { name: 'Show column Regions' }));
    expect(within(table).getByRole('columnheader', { name: /Regions/ })).toBeTruthy();
  });

  it('lists 500 entries and filters them while typing', async () => {
    const many = Array.from({ length: 500 }, (_, i) =>
      entry({ key: `syst_${String(i).padStart(3, '0')}`, label: `Systematic ${i}`, group: i % 7 === 0 ? 'theory' : 'tracking', warnings: i % 5 }),
    );
    const router = createMemoryRouter([{ path: '/', element: <RegisterTable slug="demo" entries={many} /> }]);
    const started = performance.now();
    render(<RouterProvider router={router} />);
    const table = screen.getByRole('table', { name: 'Register entries' });
    expect(within(table).getAllByRole('row')).toHaveLength(501);
    const user = userEvent.setup();
    await user.type(screen.getByLabelText('Filter entries'), 'syst_49');
    await vi.waitFor(() => expect(keysInOrder(table)).toEqual(Array.from({ length: 10 }, (_, i) => `syst_49${i}`)));
    // generous bound for a slow shared runner; a render storm takes far longer
    expect(performance.now() - started).toBeLessThan(15_000);
  });
});
