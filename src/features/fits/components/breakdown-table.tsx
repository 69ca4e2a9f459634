import type { BreakdownRow } from '@shared/schemas/variants';
import { DataTable, dataColumns } from '../../../components/ui/data-table';
import { formatFixed } from '../../../lib/stats-format';

const col = dataColumns<BreakdownRow>();

const columns = col.columns([
  col.accessor('group', { header: 'Source' }),
  col.accessor('up', {
    header: 'σ₊ by freezing',
    meta: { numeric: true, headerTitle: '√(σ₊² − σ₊² with the source held at its best fit), from the q = 1 crossings of the μ scan' },
    cell: (c) => formatFixed(c.getValue(), 3),
  }),
  col.accessor('down', {
    header: 'σ₋ by freezing',
    meta: { numeric: true, headerTitle: '√(σ₋² − σ₋² with the source held at its best fit), from the q = 1 crossings of the μ scan' },
    cell: (c) => formatFixed(c.getValue(), 3),
  }),
  col.accessor('schur', {
    header: 'From the covariance',
    meta: { numeric: true, headerTitle: 'The grouped impact of the same source from the covariance (the Groups view of the fit), beside it' },
    cell: (c) => formatFixed(c.getValue(), 3),
  }),
  col.accessor('flagged', {
    header: 'Flag',
    meta: { headerTitle: 'Set where holding the source widened the interval: the difference was negative and is shown as 0' },
    cell: (c) =>
      c.getValue() ? (
        <span className="text-xs font-semibold text-amber-ink" title="Holding this source made the interval wider, not narrower; 0 is shown">
          negative difference, shown as 0
        </span>
      ) : (
        ''
      ),
  }),
]);

/** The uncertainty on μ by source, by freezing each and rescanning μ, beside the covariance figure. */
export function BreakdownTable({ rows, label }: { rows: BreakdownRow[]; label: string }) {
  return <DataTable columns={columns} data={rows} getRowId={(r) => r.group} label={label} rowHeader="group" frame="plain" />;
}
