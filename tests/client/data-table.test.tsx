// @vitest-environment happy-dom
import { afterEach, describe, expect, it, vi } from 'vitest';
import { cleanup, render, screen, within } from '@testing-library/react';
import userEvent from '@testing-library/user-event';
import { createMemoryRouter, Link, RouterProvider } from 'react-router';
import { DataTable, dataColumns } from '../../src/components/ui/data-table';

afterEach(cleanup);

type Region = { key: string; events: number; role: string };

const col = dataColumns<Region>();
const columns = [
  col.accessor('key', { header: 'Region', sortFn: 'alphanumeric', cell: (c) => <Link to={`/regions/${c.getValue()}`}>{c.getValue()}</Link> }),
  col.accessor('events', { header: 'Events', sortFn: 'basic', meta: { numeric: true, cellTitle: 'events' } }),
  col.accessor('role', { header: 'Role', enableSorting: false }),
];
const regions: Region[] = [
  { key: 'SR_b', events: 12, role: 'signal' },
  { key: 'CR_a', events: 340, role: 'control' },
  { key: 'SR_a', events: 57, role: 'signal' },
];

function renderTable(props: Partial<Parameters<typeof DataTable<Region>>[0]> = {}) {
  const router = createMemoryRouter([
    { path: '/', element: <DataTable columns={columns} data={regions} label="Regions" sortable rowHeader="key" {...props} /> },
    { path: '/regions/:key', element: <p>a region</p> },
  ]);
  render(<RouterProvider router={router} />);
  return { table: screen.queryByRole('table', { name: 'Regions' }), router };
}

const firstColumn = (table: HTMLElement) =>
  within(table)
    .getAllByRole('rowheader')
    .map((c) => c.textContent);

describe('the data table', () => {
  it('keeps the order of its rows until a header is pressed, then sorts both ways and says so on the header cell', async () => {
    const user = userEvent.setup();
    const { table } = renderTable();
    expect(firstColumn(table!)).toEqual(['SR_b', 'CR_a', 'SR_a']);
    const header = within(table!).getByRole('columnheader', { name: /Events/ });
    expect(header.getAttribute('aria-sort')).toBe('none');
    const shown = () => firstColumn(table!).map((key) => regions.find((r) => r.key === key)!.events);
    for (const _ of [1, 2]) {
      await user.click(within(header).getByRole('button'));
      const direction = header.getAttribute('aria-sort');
      expect(['ascending', 'descending']).toContain(direction);
      expect(shown()).toEqual([...shown()].sort((a, b) => (direction === 'ascending' ? a - b : b - a)));
    }
    expect(within(table!).getByRole('columnheader', { name: /Region/ }).getAttribute('aria-sort')).toBe('none');
  });

  it('gives a column that may not sort a plain header, right-aligns numbers and names each row by its row header', () => {
    const { table } = renderTable();
    const role = within(table!).getByRole('columnheader', { name: 'Role' });
    expect(role.getAttribute('aria-sort')).toBeNull();
    expect(within(role).queryByRole('button')).toBeNull();
    const cell = within(table!).getByRole('cell', { name: '340' });
    expect(cell.className).toContain('text-right');
    expect(cell.getAttribute('title')).toBe('events');
    expect(within(table!).getAllByRole('rowheader')).toHaveLength(3);
  });

  it('says so in one row when there are no rows', () => {
    const { table } = renderTable({ data: [], empty: 'No region yet.' });
    const rows = within(table!).getAllByRole('row');
    expect(rows).toHaveLength(2);
    expect(within(rows[1]).getByRole('cell').textContent).toBe('No region yet.');
  });

  it('does on a row click what its handler says, and leaves a click on a link inside the row to the link', async () => {
    const user = userEvent.setup();
    const clicked = vi.fn();
    const { table, router } = renderTable({ onRowClick: (r) => clicked(r.key) });
    await user.click(within(table!).getByRole('cell', { name: '57' }));
    expect(clicked).toHaveBeenCalledWith('SR_a');
    await user.click(within(table!).getByRole('link', { name: 'CR_a' }));
    expect(clicked).toHaveBeenCalledTimes(1);
    expect(router.state.location.pathname).toBe('/regions/CR_a');
  });

  it('marks the current row for assistive technology', () => {
    const { table } = renderTable({ rowTone: (r) => (r.key === 'CR_a' ? 'current' : undefined) });
    const current = within(table!)
      .getAllByRole('row')
      .filter((r) => r.getAttribute('aria-current') === 'true');
    expect(current.map((r) => within(r).getByRole('rowheader').textContent)).toEqual(['CR_a']);
  });
});
