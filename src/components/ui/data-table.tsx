import { memo, useCallback, useRef, useState, type MouseEvent, type ReactNode } from 'react';
import {
  createColumnHelper,
  createSortedRowModel,
  FlexRender,
  rowSortingFeature,
  sortFn_alphanumeric,
  sortFn_basic,
  sortFn_text,
  tableFeatures,
  useTable,
  type Cell,
  type CellData,
  type ColumnDef,
  type Header,
  type ReactTable,
  type Row,
  type RowData,
  type SortingState,
  type TableFeatures,
} from '@tanstack/react-table';

/**
 * The one data table of the app, on @tanstack/react-table v9: the shared look (dense ruled rows,
 * header on paper), sortable headers as buttons with aria-sort on the header cell, numbers
 * right-aligned, an optional row header, a row click that repeats the link or button inside the
 * row, a first column that stays in view while a wide table scrolls sideways, and a frame that
 * scrolls inside itself. Columns say how their cells look through `meta` (DataColumnMeta).
 */

/** How a column's header and cells look, beyond what its definition renders. */
export type DataColumnMeta<TData = unknown> = {
  /** Numbers: right-aligned with tabular figures. */
  numeric?: boolean;
  /** Keep the column's cells on one line. */
  nowrap?: boolean;
  /** What the column holds, on hover of its header. */
  headerTitle?: string;
  /** A header for assistive technology only (an actions column). */
  srOnlyHeader?: boolean;
  /** Classes of the header cell beyond the shared look. */
  headerClass?: string;
  /** Classes of every body cell of the column, or of one row's. */
  cellClass?: string | ((row: TData) => string);
  /** The title of a body cell (its unit or meaning), for every row or per row. */
  cellTitle?: string | ((row: TData) => string | undefined);
  /** Further attributes of a body cell (a test id). */
  cellProps?: (row: TData) => Record<string, string | undefined>;
};

declare module '@tanstack/table-core' {
  // Every table's columns may carry the data table's meta (the interface is empty by default).
  interface ColumnMeta<in out TFeatures extends TableFeatures, in out TData extends RowData, TValue extends CellData = CellData> extends DataColumnMeta<TData> {}
}

/** The features of a data table: sorting by the named sort functions. */
export const dataTableFeatures = tableFeatures({
  rowSortingFeature,
  sortedRowModel: createSortedRowModel(),
  sortFns: { alphanumeric: sortFn_alphanumeric, text: sortFn_text, basic: sortFn_basic },
});

export type DataTableFeatures = typeof dataTableFeatures;
export type DataColumn<TData extends RowData> = ColumnDef<DataTableFeatures, TData, any>;

/** The column helper of a data table over rows of TData. */
export function dataColumns<TData extends RowData>() {
  return createColumnHelper<DataTableFeatures, TData>();
}

/** How a row stands out: the one shown below it ('current'), a flagged one ('marked'), one whose details are open ('open'). */
export type RowTone = 'current' | 'marked' | 'open';

// A row's tint is also written to --row-tint, which a sticky cell paints over its opaque paper: the
// cells that scroll beneath it stay hidden, and it takes the row's colour like the others.
const TINT = {
  hover: 'hover:bg-paper-sunk/50 hover:[--row-tint:color-mix(in_oklab,var(--color-paper-sunk)_50%,transparent)]',
  clickable: 'cursor-pointer hover:bg-teal-soft/40 hover:[--row-tint:color-mix(in_oklab,var(--color-teal-soft)_40%,transparent)]',
  current: 'bg-teal-soft/50 [--row-tint:color-mix(in_oklab,var(--color-teal-soft)_50%,transparent)]',
  marked: 'bg-plum-soft/30 [--row-tint:color-mix(in_oklab,var(--color-plum-soft)_30%,transparent)]',
  open: 'bg-paper-sunk/40 [--row-tint:color-mix(in_oklab,var(--color-paper-sunk)_40%,transparent)]',
} as const;

const STICKY = 'sticky left-0 bg-paper-raised bg-[image:linear-gradient(var(--row-tint),var(--row-tint))]';
// Header cells are opaque (the sunk paper's tint mixed into the raised paper, not laid over it):
// the header stays at the top of a frame that scrolls, and the rows pass beneath it unseen.
const TH = 'border-b border-rule-strong px-3 py-1.5 text-left text-xs font-semibold text-ink-soft';
const TD = 'border-b border-rule px-3 py-1.5 align-top';

const FRAMES = {
  /** A table on its own: ruled and rounded on raised paper. */
  panel: 'overflow-auto rounded-lg border border-rule bg-paper-raised',
  /** A table inside a panel that already frames it. */
  plain: 'overflow-auto',
} as const;

/** The height a wide table's frame keeps within: the window less the top bar and a strip of page. */
const WINDOW_HEIGHT = 'max-h-[calc(100dvh-7rem)]';

type SortableColumn = {
  getCanSort?: () => boolean;
  getIsSorted?: () => false | 'asc' | 'desc';
  getToggleSortingHandler?: () => ((event: unknown) => void) | undefined;
};

function metaOf<TData>(column: { columnDef: { meta?: unknown } }): DataColumnMeta<TData> {
  return (column.columnDef.meta ?? {}) as DataColumnMeta<TData>;
}

function HeaderCell<TFeatures extends TableFeatures, TData extends RowData>({ header, sticky }: { header: Header<TFeatures, TData, CellData>; sticky: boolean }) {
  const meta = metaOf<TData>(header.column);
  const column = header.column as unknown as SortableColumn;
  const sortable = column.getCanSort?.() ?? false;
  const sorted = sortable ? (column.getIsSorted?.() ?? false) : false;
  const className = `${TH} ${sticky ? `${STICKY} z-[3] [--row-tint:color-mix(in_oklab,var(--color-paper-sunk)_70%,transparent)]` : 'bg-[color-mix(in_oklab,var(--color-paper-sunk)_70%,var(--color-paper-raised))]'} ${meta.numeric ? 'text-right' : ''} ${sortable || meta.nowrap ? 'whitespace-nowrap' : ''} ${meta.headerClass ?? ''}`;
  const content = header.isPlaceholder ? null : <FlexRender header={header} />;
  if (!sortable)
    return (
      <th scope="col" className={className} title={meta.headerTitle}>
        {meta.srOnlyHeader ? <span className="sr-only">{content}</span> : content}
      </th>
    );
  return (
    <th scope="col" aria-sort={sorted === 'asc' ? 'ascending' : sorted === 'desc' ? 'descending' : 'none'} className={className}>
      <button type="button" onClick={column.getToggleSortingHandler?.()} className="inline-flex items-center gap-1 rounded hover:text-ink" title={meta.headerTitle ?? 'Sort by this column'}>
        {content}
        <span aria-hidden className={`w-2.5 text-2xs ${sorted ? 'text-teal-ink' : 'text-rule-strong'}`}>
          {sorted === 'asc' ? '▲' : sorted === 'desc' ? '▼' : '↕'}
        </span>
      </button>
    </th>
  );
}

function BodyCell<TFeatures extends TableFeatures, TData extends RowData>({ cell, rowHeader, sticky, extra }: { cell: Cell<TFeatures, TData, CellData>; rowHeader: boolean; sticky: boolean; extra: string }) {
  const meta = metaOf<TData>(cell.column);
  const original = cell.row.original;
  const own = typeof meta.cellClass === 'function' ? meta.cellClass(original) : (meta.cellClass ?? '');
  const title = typeof meta.cellTitle === 'function' ? meta.cellTitle(original) : meta.cellTitle;
  // A row header is bold by default; it takes the weight its column asks for, else the body's.
  const weight = rowHeader && !/\bfont-(light|normal|medium|semibold|bold)\b/.test(own) ? 'font-normal' : '';
  const className = `${TD} ${rowHeader ? `text-left ${weight}` : ''} ${meta.numeric ? 'text-right tabular-nums' : ''} ${meta.nowrap ? 'whitespace-nowrap' : ''} ${sticky ? `${STICKY} z-[1]` : ''} ${extra} ${own}`;
  const props = { className, title, ...meta.cellProps?.(original) };
  return rowHeader ? (
    <th scope="row" {...props}>
      <FlexRender cell={cell} />
    </th>
  ) : (
    <td {...props}>
      <FlexRender cell={cell} />
    </td>
  );
}

type RowViewProps<TFeatures extends TableFeatures, TData extends RowData> = {
  row: Row<TFeatures, TData>;
  /** The row's data and the visible columns: a memoised row renders again only when one of them changes. */
  original: TData;
  columnsKey: string;
  tone: RowTone | undefined;
  clickable: boolean;
  onClick: (row: Row<TFeatures, TData>, event: MouseEvent<HTMLTableRowElement>) => void;
  rowHeader: string | undefined;
  sticky: boolean;
  cellClass: string;
};

function visibleCells<TFeatures extends TableFeatures, TData extends RowData>(row: Row<TFeatures, TData>): Cell<TFeatures, TData, CellData>[] {
  const r = row as Row<TFeatures, TData> & { getVisibleCells?: () => Cell<TFeatures, TData, CellData>[] };
  return r.getVisibleCells ? r.getVisibleCells() : row.getAllCells();
}

function RowView<TFeatures extends TableFeatures, TData extends RowData>({ row, tone, clickable, onClick, rowHeader, sticky, cellClass }: RowViewProps<TFeatures, TData>) {
  // The current row keeps its tint under the pointer; the others take the hover tint.
  const hover = tone === 'current' ? (clickable ? 'cursor-pointer' : '') : clickable ? TINT.clickable : TINT.hover;
  const tint = `${tone ? TINT[tone] : ''} ${hover}`;
  return (
    <tr className={tint} aria-current={tone === 'current' ? 'true' : undefined} onClick={clickable ? (e) => onClick(row, e) : undefined}>
      {visibleCells(row).map((cell, i) => (
        <BodyCell key={cell.id} cell={cell} rowHeader={cell.column.id === rowHeader} sticky={sticky && i === 0} extra={cellClass} />
      ))}
    </tr>
  );
}

const MemoRowView = memo(RowView) as typeof RowView;

/** A click on something that acts by itself (a link, a button, a field) is not a click on the row. */
function onControl(event: MouseEvent): boolean {
  return event.target instanceof Element && event.target.closest('a, button, input, select, textarea, label, summary') !== null;
}

export type TableViewProps<TFeatures extends TableFeatures, TData extends RowData> = {
  table: ReactTable<TFeatures, TData, any>;
  /** The table's accessible name. */
  label: string;
  /** A visible caption above the table, when the page has no heading that says what it holds. */
  caption?: ReactNode;
  /** Shown in one row across the table when it has no rows. */
  empty?: ReactNode;
  /** The column whose cells name their row: written as row headers (<th scope="row">). */
  rowHeader?: string;
  /**
   * Keep the first column in view while a wide table scrolls sideways. Such a frame is also held
   * within the window's height (unless `frameClass` gives a height), so that its sideways scroll
   * bar is in view with its headers rather than below the last row.
   */
  stickyFirstColumn?: boolean;
  /** The frame: 'panel' (default) on its own, 'plain' inside a panel. */
  frame?: keyof typeof FRAMES;
  /** Classes of the frame beyond its kind: a height to scroll within (`max-h-[28rem]`), margins. */
  frameClass?: string;
  /** Classes of every body cell. */
  cellClass?: string;
  /** How a row stands out, if it does. */
  rowTone?: (row: TData) => RowTone | undefined;
  /**
   * What a click anywhere on a row does: the same as a link or a button inside the row, which
   * stays the way in for the keyboard. Clicks on links, buttons and fields in the row are theirs.
   */
  onRowClick?: (row: TData) => void;
  /** A full-width row beneath a row (an editor, a message's body), with an id for aria-controls. */
  below?: (row: TData) => { id?: string; content: ReactNode } | null;
  /** Render a row again only when its data or the visible columns change: for long lists whose cells read nothing else. */
  memoRows?: boolean;
};

/** A table instance drawn with the shared look. Build the instance with useDataTable, or with useTable for more features (filters, column visibility). */
export function TableView<TFeatures extends TableFeatures, TData extends RowData>({
  table,
  label,
  caption,
  empty,
  rowHeader,
  stickyFirstColumn = false,
  frame = 'panel',
  frameClass = '',
  cellClass = '',
  rowTone,
  onRowClick,
  below,
  memoRows = false,
}: TableViewProps<TFeatures, TData>) {
  const click = useRef(onRowClick);
  click.current = onRowClick;
  const onClick = useCallback((row: Row<TFeatures, TData>, event: MouseEvent<HTMLTableRowElement>) => {
    if (!onControl(event)) click.current?.(row.original);
  }, []);
  const groups = table.getHeaderGroups();
  const leaves = groups[groups.length - 1]?.headers ?? [];
  const columnsKey = leaves.map((h) => h.column.id).join(' ');
  const rows = table.getRowModel().rows;
  const RowComponent = memoRows ? MemoRowView : RowView;
  const heightCap = stickyFirstColumn && !/(^|\s)max-h-/.test(frameClass) ? WINDOW_HEIGHT : '';
  return (
    <div className={`${FRAMES[frame]} ${heightCap} ${frameClass}`}>
      <table className="w-full border-collapse text-sm" aria-label={label}>
        {caption && <caption className="px-3 py-1.5 text-left text-xs text-ink-muted">{caption}</caption>}
        <thead className="sticky top-0 z-[2]">
          {groups.map((group) => (
            <tr key={group.id}>
              {group.headers.map((header, i) => (
                <HeaderCell key={header.id} header={header} sticky={stickyFirstColumn && i === 0} />
              ))}
            </tr>
          ))}
        </thead>
        <tbody>
          {rows.map((row) => {
            const more = below?.(row.original);
            return [
              <RowComponent
                key={row.id}
                row={row}
                original={row.original}
                columnsKey={columnsKey}
                tone={rowTone?.(row.original)}
                clickable={onRowClick !== undefined}
                onClick={onClick}
                rowHeader={rowHeader}
                sticky={stickyFirstColumn}
                cellClass={cellClass}
              />,
              more ? (
                <tr key={`${row.id}-below`} id={more.id}>
                  <td colSpan={leaves.length} className={`${TD} bg-paper-sunk/40`}>
                    {more.content}
                  </td>
                </tr>
              ) : null,
            ];
          })}
          {rows.length === 0 && empty !== undefined && (
            <tr>
              <td colSpan={leaves.length || 1} className={`${TD} py-6 text-center text-ink-muted`}>
                {empty}
              </td>
            </tr>
          )}
        </tbody>
      </table>
    </div>
  );
}

export type DataTableOptions<TData extends RowData> = {
  columns: DataColumn<TData>[];
  data: TData[];
  /** Whether the headers sort the rows (a column may still opt out with enableSorting: false). */
  sortable?: boolean;
  /** The order the table opens in; none keeps the order of `data`. */
  initialSorting?: SortingState;
  /** A row's stable id, so that React keeps a row's state when the rows move. */
  getRowId?: (row: TData, index: number) => string;
};

/** A table instance with the data table's features and its own sorting state. */
export function useDataTable<TData extends RowData>({ columns, data, sortable = false, initialSorting = [], getRowId }: DataTableOptions<TData>) {
  const [sorting, setSorting] = useState<SortingState>(initialSorting);
  return useTable({ features: dataTableFeatures, columns, data, state: { sorting }, onSortingChange: setSorting, enableSorting: sortable, getRowId });
}

/** A data table from columns and rows: useDataTable and TableView in one. */
export function DataTable<TData extends RowData>({ columns, data, sortable, initialSorting, getRowId, ...view }: DataTableOptions<TData> & Omit<TableViewProps<DataTableFeatures, TData>, 'table'>) {
  const table = useDataTable({ columns, data, sortable, initialSorting, getRowId });
  return <TableView table={table} {...view} />;
}
