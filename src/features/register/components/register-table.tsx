import { useState } from 'react';
import { Link } from 'react-router';
import {
  columnFilteringFeature,
  createColumnHelper,
  createFilteredRowModel,
  createSortedRowModel,
  filterFn_includesString,
  globalFilteringFeature,
  rowSortingFeature,
  sortFn_alphanumeric,
  sortFn_text,
  tableFeatures,
  useTable,
  type SortingState,
} from '@tanstack/react-table';
import type { EntrySummary } from '@shared/schemas/api';
import { EmptyState } from '../../../components/ui/empty-state';
import { tableClass, tdClass, thClass } from '../../../components/ui/page';
import { formatPercent } from '../../../lib/format';
import { ENTRY_STATES } from '../entry-states';
import { EntryStateBadge } from './entry-state-badge';

const features = tableFeatures({
  rowSortingFeature,
  columnFilteringFeature,
  globalFilteringFeature,
  sortedRowModel: createSortedRowModel(),
  filteredRowModel: createFilteredRowModel(),
  sortFns: { alphanumeric: sortFn_alphanumeric, text: sortFn_text },
  filterFns: { includesString: filterFn_includesString },
});

const col = createColumnHelper<typeof features, EntrySummary>();

/** The text a row is found by: everything a reader might type to look for an entry. */
function searchText(e: EntrySummary): string {
  return [e.key, e.label, e.group ?? '', e.owner?.name ?? '', e.owner?.email ?? '', e.processes.join(' '), e.regions.join(' '), e.state.replace('_', ' ')]
    .join(' ')
    .toLowerCase();
}

function makeColumns(slug: string) {
  return col.columns([
    col.accessor('key', {
      header: 'Key',
      sortFn: 'alphanumeric',
      cell: (c) => (
        <Link to={`/a/${slug}/entries/${encodeURIComponent(c.getValue())}`} className="font-mono text-xs font-medium text-teal-ink hover:underline">
          {c.getValue()}
        </Link>
      ),
    }),
    col.accessor('label', { header: 'Label', sortFn: 'text' }),
    col.accessor((e) => e.group ?? '', {
      id: 'group',
      header: 'Group',
      sortFn: 'text',
      cell: (c) => c.getValue() || <span className="text-ink-muted">none</span>,
    }),
    col.accessor((e) => e.owner?.name ?? '', {
      id: 'owner',
      header: 'Owner',
      sortFn: 'text',
      cell: (c) => {
        const owner = c.row.original.owner;
        return owner ? <span title={owner.email}>{owner.name}</span> : <span className="text-ink-muted">unassigned</span>;
      },
    }),
    col.accessor((e) => e.processes.length, {
      id: 'processes',
      header: 'Processes',
      cell: (c) => {
        const ps = c.row.original.processes;
        return ps.length ? (
          <span title={`Affects ${ps.length} process${ps.length === 1 ? '' : 'es'}: ${ps.join(', ')}`} className="text-xs">
            {ps.join(', ')}
          </span>
        ) : (
          <span className="text-ink-muted">none yet</span>
        );
      },
    }),
    col.accessor((e) => e.largestEffectPct ?? undefined, {
      id: 'largestEffect',
      header: 'Largest effect',
      sortUndefined: 'last',
      cell: (c) => {
        const v = c.row.original.largestEffectPct;
        return v === null ? (
          <span className="text-ink-muted" title="No variation uploaded yet">
            –
          </span>
        ) : (
          <span className="tabular-nums" title="Largest |variation − nominal| / nominal in any bin of any region and process">
            {formatPercent(v)}
          </span>
        );
      },
    }),
    col.accessor((e) => ENTRY_STATES.indexOf(e.state), {
      id: 'state',
      header: 'State',
      cell: (c) => <EntryStateBadge state={c.row.original.state} />,
    }),
    col.accessor('warnings', {
      header: 'Warnings',
      cell: (c) => {
        const n = c.getValue();
        return n > 0 ? (
          <span className="font-semibold text-amber-ink tabular-nums" title={`${n} validation warning${n === 1 ? '' : 's'} on this entry's uploads`}>
            {n}
          </span>
        ) : (
          <span className="text-ink-muted tabular-nums" title="No validation warnings">
            0
          </span>
        );
      },
    }),
  ]);
}

const NUMERIC = new Set(['largestEffect', 'warnings']);
/** Short values stay on one line so rows stay one line high; labels and process lists may wrap. */
const NOWRAP = new Set(['key', 'group', 'owner', 'state', 'largestEffect', 'warnings']);

export function RegisterTable({ slug, entries }: { slug: string; entries: EntrySummary[] }) {
  const [columns] = useState(() => makeColumns(slug));
  const [sorting, setSorting] = useState<SortingState>([{ id: 'key', desc: false }]);
  const [globalFilter, setGlobalFilter] = useState('');

  const table = useTable({
    features,
    columns,
    data: entries,
    state: { sorting, globalFilter },
    onSortingChange: setSorting,
    onGlobalFilterChange: setGlobalFilter,
    globalFilterFn: (row, _columnId, value: string) => searchText(row.original).includes(value.trim().toLowerCase()),
    getColumnCanGlobalFilter: (column) => column.id === 'key',
  });

  const rows = table.getRowModel().rows;

  if (entries.length === 0)
    return (
      <EmptyState title="The register is empty">
        <p>Register entries, one per systematic uncertainty, will be listed here once analysts create them.</p>
      </EmptyState>
    );

  return (
    <div>
      <div className="mb-3 flex flex-wrap items-end justify-between gap-3">
        <div className="flex flex-col gap-1">
          <label htmlFor="register-filter" className="text-xs font-semibold text-ink-soft">
            Filter entries
          </label>
          <input
            id="register-filter"
            type="search"
            value={globalFilter}
            onChange={(e) => setGlobalFilter(e.target.value)}
            placeholder="key, label, group, owner, process, state…"
            className="w-80 rounded-md border border-rule-strong bg-paper-raised px-2.5 py-1.5 text-sm"
          />
        </div>
        <p className="text-xs text-ink-muted" aria-live="polite">
          Showing {rows.length} of {entries.length} entries
        </p>
      </div>
      <div className="overflow-x-auto rounded-lg border border-rule bg-paper-raised">
        <table className={tableClass} aria-label="Register entries">
          <thead>
            {table.getHeaderGroups().map((group) => (
              <tr key={group.id}>
                {group.headers.map((header) => {
                  const sorted = header.column.getIsSorted();
                  return (
                    <th
                      key={header.id}
                      scope="col"
                      aria-sort={sorted === 'asc' ? 'ascending' : sorted === 'desc' ? 'descending' : 'none'}
                      className={`${thClass} whitespace-nowrap ${NUMERIC.has(header.column.id) ? 'text-right' : ''}`}
                    >
                      {header.isPlaceholder ? null : (
                        <button
                          type="button"
                          onClick={header.column.getToggleSortingHandler()}
                          className="inline-flex items-center gap-1 rounded hover:text-ink"
                          title="Sort by this column"
                        >
                          <table.FlexRender header={header} />
                          <span aria-hidden className={`w-2.5 text-2xs ${sorted ? 'text-teal-ink' : 'text-rule-strong'}`}>
                            {sorted === 'asc' ? '▲' : sorted === 'desc' ? '▼' : '↕'}
                          </span>
                        </button>
                      )}
                    </th>
                  );
                })}
              </tr>
            ))}
          </thead>
          <tbody>
            {rows.map((row) => (
              <tr key={row.id} className="hover:bg-paper-sunk/50">
                {row.getAllCells().map((cell) => (
                  <td
                    key={cell.id}
                    className={`${tdClass} ${NUMERIC.has(cell.column.id) ? 'text-right' : ''} ${NOWRAP.has(cell.column.id) ? 'whitespace-nowrap' : ''}`}
                  >
                    <table.FlexRender cell={cell} />
                  </td>
                ))}
              </tr>
            ))}
            {rows.length === 0 && (
              <tr>
                <td colSpan={table.getAllLeafColumns().length} className={`${tdClass} py-6 text-center text-ink-muted`}>
                  No entry matches “{globalFilter}”.
                </td>
              </tr>
            )}
          </tbody>
        </table>
      </div>
    </div>
  );
}
