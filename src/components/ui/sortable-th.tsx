import type { ReactNode } from 'react';
import { thClass } from './page';

/**
 * A sortable column header: a button that toggles the sort, the direction as an arrow, and
 * aria-sort on the header cell so assistive technology reads the order.
 */
export function SortableTh({ sorted, onSort, numeric, children }: { sorted: false | 'asc' | 'desc'; onSort?: (event: unknown) => void; numeric?: boolean; children: ReactNode }) {
  return (
    <th scope="col" aria-sort={sorted === 'asc' ? 'ascending' : sorted === 'desc' ? 'descending' : 'none'} className={`${thClass} whitespace-nowrap ${numeric ? 'text-right' : ''}`}>
      {children === null ? null : (
        <button type="button" onClick={onSort} className="inline-flex items-center gap-1 rounded hover:text-ink" title="Sort by this column">
          {children}
          <span aria-hidden className={`w-2.5 text-2xs ${sorted ? 'text-teal-ink' : 'text-rule-strong'}`}>
            {sorted === 'asc' ? '▲' : sorted === 'desc' ? '▼' : '↕'}
          </span>
        </button>
      )}
    </th>
  );
}
