import { Link } from 'react-router';
import type { DecorrelationReport } from '@shared/schemas/variants';
import { DataTable, dataColumns } from '../../../components/ui/data-table';
import { fitPath, variantShortName } from '../../../lib/fits';
import { formatFixed, formatProbability, formatSigned } from '../../../lib/stats-format';

/** One split systematic, and where several fits are listed, the fit that split it. */
export type DecorrelationRow = DecorrelationReport & { variant?: string; fitId?: number };

/** A p-value below which the parts are said to disagree (common practice, no source). */
const DISAGREE_P = 0.05;

const col = dataColumns<DecorrelationRow>();

function makeColumns(slug: string) {
  return col.columns([
    col.accessor('parameter', {
      header: 'Systematic',
      cell: (c) => (
        <>
          <span className="font-mono text-xs">{c.getValue()}</span>
          <span className="block text-2xs text-ink-muted">
            split by {c.row.original.by}
            {c.row.original.fitId !== undefined && (
              <>
                {' '}
                in{' '}
                <Link to={fitPath(slug, c.row.original.fitId)} className="text-teal-ink hover:underline">
                  {variantShortName(c.row.original.variant ?? null)}
                </Link>
              </>
            )}
          </span>
        </>
      ),
    }),
    col.accessor('parts', {
      header: 'Parts: best fit ± σ',
      meta: { cellClass: 'text-xs' },
      cell: (c) => (
        <ul className="grid w-fit grid-cols-[auto_auto] gap-x-4">
          {c.getValue().map((p) => (
            <li key={p.name} className="col-span-2 grid grid-cols-subgrid tabular-nums" title={`${p.name}: the part of the systematic in ${p.where} alone`}>
              <span>{p.where}</span>
              <span className="text-right">
                {formatSigned(p.value, 2)}
                {p.error !== null && ` ± ${formatFixed(p.error, 2)}`}
              </span>
            </li>
          ))}
        </ul>
      ),
    }),
    col.accessor('average', { header: 'Average', meta: { numeric: true, headerTitle: 'The weighted average of the parts with their correlations' }, cell: (c) => formatSigned(c.getValue(), 2) }),
    col.accessor('chi2', {
      header: 'χ² / dof',
      meta: { numeric: true, nowrap: true, headerTitle: 'How far the parts are from their average, with their correlations; parts − 1 degrees of freedom' },
      cell: (c) => `${formatFixed(c.getValue(), 2)} / ${c.row.original.dof}`,
    }),
    col.accessor('p', {
      header: 'p',
      meta: { numeric: true, nowrap: true, headerTitle: `Probability of a χ² at least this large if the parts agree; below ${DISAGREE_P} they disagree` },
      cell: (c) => {
        const p = c.getValue();
        return (
          <>
            {formatProbability(p)}
            {p !== null && p < DISAGREE_P && <span className="block text-2xs font-semibold text-amber-ink">parts disagree</span>}
          </>
        );
      },
    }),
  ]);
}

/** The consistency of each split systematic: do its parts want the same value? */
export function DecorrelationTable({ slug, rows }: { slug: string; rows: DecorrelationRow[] }) {
  return <DataTable columns={makeColumns(slug)} data={rows} getRowId={(r) => `${r.fitId ?? ''}:${r.parameter}`} label="Decorrelation tests" rowHeader="parameter" frame="plain" />;
}
