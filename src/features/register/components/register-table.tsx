import { startTransition, useMemo, useState } from 'react';
import { Link } from 'react-router';
import {
  columnFilteringFeature,
  columnVisibilityFeature,
  constructFilterFn,
  createColumnHelper,
  createFilteredRowModel,
  createSortedRowModel,
  globalFilteringFeature,
  rowSortingFeature,
  sortFn_alphanumeric,
  sortFn_basic,
  sortFn_text,
  tableFeatures,
  useTable,
  type ColumnFiltersState,
  type ColumnVisibilityState,
  type SortingState,
} from '@tanstack/react-table';
import type { EntryState, EntrySummary } from '@shared/schemas/api';
import { EmptyState } from '../../../components/ui/empty-state';
import { SelectField } from '../../../components/ui/field';
import { TableView } from '../../../components/ui/data-table';
import { formatPercent } from '../../../lib/format';
import { ENTRY_STATES } from '@shared/vocabulary';
import { ENTRY_STATE_META, EntryStateBadge } from '../../../components/status/entry-state';
import { QuestionMarker } from '../../../components/status/question-marker';

/** Equality on the column's value; '' is a real choice ("no group", "unassigned"), only undefined clears it. */
const exact = constructFilterFn({ filter: (data, wanted) => data === wanted, autoRemove: (v) => v === undefined || v === null });

const features = tableFeatures({
  rowSortingFeature,
  columnFilteringFeature,
  globalFilteringFeature,
  columnVisibilityFeature,
  sortedRowModel: createSortedRowModel(),
  filteredRowModel: createFilteredRowModel(),
  sortFns: { alphanumeric: sortFn_alphanumeric, text: sortFn_text, basic: sortFn_basic },
  filterFns: { exact },
});

const col = createColumnHelper<typeof features, EntrySummary>();

/** The text a row is found by: everything a reader might type to look for an entry. */
function searchText(e: EntrySummary): string {
  return [e.key, e.label, e.group ?? '', e.owner?.name ?? '', e.owner?.email ?? '', e.processes.join(' '), e.regions.join(' '), e.state.replace('_', ' ')]
    .join(' ')
    .toLowerCase();
}

/** Search text per entry, computed once per list rather than once per keystroke. */
const searchIndex = new WeakMap<EntrySummary, string>();
function indexed(e: EntrySummary): string {
  let s = searchIndex.get(e);
  if (s === undefined) {
    s = searchText(e);
    searchIndex.set(e, s);
  }
  return s;
}

function ListCell({ items, noun }: { items: string[]; noun: [string, string] }) {
  if (!items.length) return <span className="text-ink-muted">none yet</span>;
  return (
    <span title={`Affects ${items.length} ${items.length === 1 ? noun[0] : noun[1]}: ${items.join(', ')}`} className="block max-w-[8rem] truncate text-xs">
      {items.join(', ')}
    </span>
  );
}

/**
 * An entry's pruning in a few letters beside its key, linking to the pruning screen: effects the
 * rules propose (dashed: a proposal) and effects pruned (solid: done). Its words are in its label.
 */
function PruningMarker({ slug, entryKey, pruning }: { slug: string; entryKey: string; pruning: EntrySummary['pruning'] }) {
  const { candidates, pruned } = pruning;
  if (!candidates && !pruned) return null;
  const words = [
    candidates ? `${candidates} effect${candidates === 1 ? '' : 's'} the pruning rules propose` : '',
    pruned ? `${pruned} effect${pruned === 1 ? '' : 's'} pruned` : '',
  ]
    .filter(Boolean)
    .join(', ');
  // the accessible name starts with the visible letters, so that speech input can say them
  const shown = [pruned > 0 ? `pruned${pruned > 1 ? ` ${pruned}` : ''}` : '', candidates > 0 ? `prune? ${candidates}` : ''].filter(Boolean).join(' ');
  return (
    <Link
      to={`/a/${slug}/pruning`}
      aria-label={`${shown}: ${entryKey}, ${words}`}
      title={`${words[0].toUpperCase()}${words.slice(1)}: open the pruning screen`}
      className="inline-flex h-4 shrink-0 items-center gap-1 text-2xs leading-none font-semibold hover:underline"
    >
      {pruned > 0 && <span className="rounded-sm border border-ink bg-ink px-1 py-px text-paper">{`pruned${pruned > 1 ? ` ${pruned}` : ''}`}</span>}
      {candidates > 0 && <span className="rounded-sm border border-dashed border-amber-ink/70 px-1 py-px text-amber-ink">{`prune? ${candidates}`}</span>}
    </Link>
  );
}

/** Short values (key, owner, state, the numbers) stay on one line; labels and group names may wrap, and the lists are cut short (all of it on hover). */
function makeColumns(slug: string) {
  return col.columns([
    col.accessor('key', {
      header: 'Key',
      sortFn: 'alphanumeric',
      enableHiding: false,
      meta: { nowrap: true },
      cell: (c) => {
        const open = c.row.original.openQuestions;
        return (
          <span className="flex items-center gap-1.5">
            <Link to={`/a/${slug}/entries/${encodeURIComponent(c.getValue())}`} className="font-mono text-xs font-medium text-teal-ink hover:underline">
              {c.getValue()}
            </Link>
            {open > 0 && (
              <QuestionMarker
                state="open"
                count={open}
                link={{
                  to: `/a/${slug}/questions?entry=${encodeURIComponent(c.getValue())}`,
                  label: `${open} unresolved question${open === 1 ? '' : 's'} on ${c.getValue()}`,
                  title: `${open} question${open === 1 ? '' : 's'} on this entry not yet resolved (open or answered)`,
                }}
              />
            )}
            <PruningMarker slug={slug} entryKey={c.getValue()} pruning={c.row.original.pruning} />
          </span>
        );
      },
    }),
    col.accessor('label', { header: 'Label', sortFn: 'text' }),
    col.accessor((e) => e.group ?? '', {
      id: 'group',
      header: 'Group',
      sortFn: 'text',
      filterFn: 'exact',
      // a long group name wraps, so that the default columns fit beside the navigation at 1440 px
      meta: { cellClass: 'min-w-[6rem]' },
      cell: (c) => c.getValue() || <span className="text-ink-muted">none</span>,
    }),
    col.accessor((e) => e.owner?.name ?? '', {
      id: 'owner',
      header: 'Owner',
      sortFn: 'text',
      filterFn: 'exact',
      meta: { nowrap: true },
      cell: (c) => {
        const owner = c.row.original.owner;
        return owner ? <span title={owner.email}>{owner.name}</span> : <span className="text-ink-muted">unassigned</span>;
      },
    }),
    col.accessor((e) => e.processes.length, {
      id: 'processes',
      header: 'Processes',
      sortFn: 'basic',
      cell: (c) => <ListCell items={c.row.original.processes} noun={['process', 'processes']} />,
    }),
    col.accessor((e) => e.regions.length, {
      id: 'regions',
      header: 'Regions',
      sortFn: 'basic',
      cell: (c) => <ListCell items={c.row.original.regions} noun={['region', 'regions']} />,
    }),
    col.accessor((e) => e.largestEffectPct ?? undefined, {
      id: 'largestEffect',
      header: 'Largest effect',
      sortFn: 'basic',
      sortUndefined: 'last',
      meta: { numeric: true, nowrap: true },
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
    col.accessor((e) => e.state, {
      id: 'state',
      header: 'State',
      filterFn: 'exact',
      meta: { nowrap: true },
      sortFn: (a, b) => ENTRY_STATES.indexOf(a.original.state) - ENTRY_STATES.indexOf(b.original.state),
      cell: (c) => <EntryStateBadge state={c.row.original.state} />,
    }),
    col.accessor('warnings', {
      header: 'Warnings',
      sortFn: 'basic',
      meta: { numeric: true, nowrap: true },
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

const COLUMN_LABELS: Record<string, string> = {
  key: 'Key',
  label: 'Label',
  group: 'Group',
  owner: 'Owner',
  processes: 'Processes',
  regions: 'Regions',
  largestEffect: 'Largest effect',
  state: 'State',
  warnings: 'Warnings',
};
/** Sentinel of the "any" choice of a filter select (every real value, '' included, is a choice). */
const ANY = '\u0000any';

function FilterSelect({ label, value, onChange, options }: { label: string; value: string; onChange: (v: string) => void; options: { value: string; label: string }[] }) {
  return (
    <SelectField label={label} value={value} onChange={(e) => onChange(e.target.value)} className="max-w-48">
      <option value={ANY}>Any</option>
      {options.map((o) => (
        <option key={o.value} value={o.value}>
          {o.label}
        </option>
      ))}
    </SelectField>
  );
}

type Table = ReturnType<typeof useTable<typeof features, EntrySummary>>;

function ColumnMenu({ table }: { table: Table }) {
  const hideable = table.getAllLeafColumns().filter((c) => c.getCanHide());
  return (
    <details className="relative">
      <summary className="flex h-8.5 cursor-pointer list-none items-center gap-1 rounded-md border border-rule-strong bg-paper-raised px-3 text-sm font-medium hover:bg-paper-sunk">
        Columns <span aria-hidden className="text-2xs text-ink-muted">▾</span>
      </summary>
      <fieldset className="absolute right-0 z-10 mt-1 w-48 rounded-md border border-rule-strong bg-paper-raised px-3 py-2 shadow-md">
        <legend className="sr-only">Columns shown</legend>
        {hideable.map((c) => (
          <label key={c.id} className="flex items-center gap-2 py-0.5 text-sm">
            <input
              type="checkbox"
              className="size-4 accent-teal"
              aria-label={`Show column ${COLUMN_LABELS[c.id] ?? c.id}`}
              checked={c.getIsVisible()}
              onChange={(e) => c.toggleVisibility(e.target.checked)}
            />
            {COLUMN_LABELS[c.id] ?? c.id}
          </label>
        ))}
      </fieldset>
    </details>
  );
}

/** The search field keeps its own text, so typing renders only the field; the table follows in a transition. */
function SearchBox({ onSearch }: { onSearch: (text: string) => void }) {
  const [text, setText] = useState('');
  return (
    <div className="flex flex-col gap-1">
      <label htmlFor="register-filter" className="text-xs font-semibold text-ink-soft">
        Filter entries
      </label>
      <input
        id="register-filter"
        type="search"
        value={text}
        onChange={(e) => {
          setText(e.target.value);
          const v = e.target.value;
          startTransition(() => onSearch(v));
        }}
        placeholder="key, label, group, owner, process, state…"
        className="w-72 rounded-md border border-rule-strong bg-paper-raised px-2.5 py-1.5 text-sm"
      />
    </div>
  );
}

export function RegisterTable({ slug, entries }: { slug: string; entries: EntrySummary[] }) {
  const columns = useMemo(() => makeColumns(slug), [slug]);
  const [sorting, setSorting] = useState<SortingState>([{ id: 'key', desc: false }]);
  const [globalFilter, setGlobalFilter] = useState('');
  const [columnFilters, setColumnFilters] = useState<ColumnFiltersState>([]);
  const [columnVisibility, setColumnVisibility] = useState<ColumnVisibilityState>({});

  const choices = useMemo(() => {
    const groups = new Set<string>();
    const owners = new Set<string>();
    let ungrouped = false;
    let unassigned = false;
    for (const e of entries) {
      if (e.group) groups.add(e.group);
      else ungrouped = true;
      if (e.owner) owners.add(e.owner.name);
      else unassigned = true;
    }
    const sorted = (s: Set<string>) => [...s].sort((a, b) => a.localeCompare(b)).map((v) => ({ value: v, label: v }));
    return {
      group: [...sorted(groups), ...(ungrouped ? [{ value: '', label: '(no group)' }] : [])],
      owner: [...sorted(owners), ...(unassigned ? [{ value: '', label: '(unassigned)' }] : [])],
      state: ENTRY_STATES.map((s: EntryState) => ({ value: s, label: ENTRY_STATE_META[s].label })),
    };
  }, [entries]);

  const table = useTable({
    features,
    columns,
    data: entries,
    state: { sorting, globalFilter, columnFilters, columnVisibility },
    onSortingChange: setSorting,
    onColumnFiltersChange: setColumnFilters,
    onColumnVisibilityChange: setColumnVisibility,
    globalFilterFn: (row, _columnId, value: string) => indexed(row.original).includes(value.trim().toLowerCase()),
    getColumnCanGlobalFilter: (column) => column.id === 'key',
  });

  const rows = table.getRowModel().rows;
  const filterValue = (id: string) => {
    const f = columnFilters.find((c) => c.id === id);
    return f === undefined ? ANY : String(f.value);
  };
  const setFilter = (id: string) => (v: string) =>
    setColumnFilters((fs) => [...fs.filter((f) => f.id !== id), ...(v === ANY ? [] : [{ id, value: v }])]);
  const filtered = globalFilter.trim() !== '' || columnFilters.length > 0;

  if (entries.length === 0)
    return (
      <div className="flex flex-col gap-3">
        <EmptyState title="The register is empty">
          <p>Register entries, one per systematic uncertainty, will be listed here once analysts create them.</p>
        </EmptyState>
      </div>
    );

  return (
    <div>
      <div className="mb-3 flex flex-wrap items-end gap-3">
        <SearchBox onSearch={setGlobalFilter} />
        <FilterSelect label="Group" value={filterValue('group')} onChange={setFilter('group')} options={choices.group} />
        <FilterSelect label="Owner" value={filterValue('owner')} onChange={setFilter('owner')} options={choices.owner} />
        <FilterSelect label="State" value={filterValue('state')} onChange={setFilter('state')} options={choices.state} />
        <div className="ml-auto flex items-end gap-2">
          <ColumnMenu table={table} />
        </div>
      </div>
      <p className="mb-1.5 text-xs text-ink-muted" aria-live="polite">
        Showing {rows.length} of {entries.length} entries
      </p>
      {/* Rows are kept by the table across sorting and filtering, and drawn again only when their entry or the visible columns change. */}
      <TableView
        table={table}
        label="Register entries"
        stickyFirstColumn
        memoRows
        empty={filtered ? `No entry matches${globalFilter.trim() ? ` “${globalFilter.trim()}”` : ''} with these filters.` : 'No entries.'}
      />
    </div>
  );
}
