import type { ShiftPrecisionView } from '@shared/schemas/register';
import { DataTable, dataColumns } from '../../../components/ui/data-table';
import { formatProbability } from '../../../lib/stats-format';

/** p at or below which a test says the shift stands out of its noise (docs/uploads.md). */
export const SIGNIFICANT_P = 0.05;

type Chi2 = ShiftPrecisionView['againstZero'];
type Row = { side: 'Up' | 'Down'; p: ShiftPrecisionView };

/** Where the errors of the shifts came from, in words. */
export function errorSource(precision: { up: ShiftPrecisionView; down: ShiftPrecisionView }): string {
  const one = (s: ShiftPrecisionView['source']) =>
    s === 'given'
      ? 'given in the file (the variance of each shift)'
      : s === 'estimated'
        ? 'estimated from the template variance v as √(2v) per bin, as the file gave no shift variance (conservative)'
        : 'not available: the template has no variance and the file gave none, so no test can be made';
  const { up, down } = precision;
  if (up.source === down.source) return `Errors of the shifts ${one(up.source)}.`;
  return `Errors of the up shift ${one(up.source)}; of the down shift ${one(down.source)}.`;
}

function Test({ c, stands, within, flat }: { c: Chi2 | (NonNullable<Chi2> & { relativeShift?: number }); stands: string; within: string; flat?: number }) {
  if (!c) return <span className="text-ink-muted">–</span>;
  const significant = c.p <= SIGNIFICANT_P;
  return (
    <span className="flex flex-wrap items-baseline gap-x-2" title={`χ² = ${c.chi2.toFixed(2)} for ${c.dof} degrees of freedom; p is the χ² survival probability, the chance of a χ² this large from noise alone`}>
      <span className="tabular-nums">
        χ² {c.chi2.toFixed(1)} / {c.dof}
      </span>
      <span className={`tabular-nums ${significant ? 'font-semibold text-ink' : ''}`}>p = {formatProbability(c.p)}</span>
      <span className={significant ? 'text-teal-ink' : 'text-amber-ink'}>{significant ? stands : within}</span>
      {flat !== undefined && <span className="text-ink-muted">(best flat shift {flat >= 0 ? '+' : '−'}{Math.abs(flat * 100).toFixed(2)} %)</span>}
    </span>
  );
}

const col = dataColumns<Row>();
const columns = [
  col.accessor('side', { header: 'Shift', meta: { nowrap: true } }),
  col.display({
    id: 'zero',
    header: 'Against zero',
    meta: { headerTitle: 'Σ Δ²/σ² over the bins: is there a shift at all, beyond the noise?' },
    cell: (c) => <Test c={c.row.original.p.againstZero} stands="a shift beyond noise" within="within noise" />,
  }),
  col.display({
    id: 'flat',
    header: 'Against a flat shift',
    meta: { headerTitle: 'Σ (Δ − c ν⁰)²/σ² with c the best relative shift, bins − 1 degrees of freedom: is there a shape beyond a flat shift and the noise?' },
    cell: (c) => <Test c={c.row.original.p.againstFlat} stands="a shape beyond noise" within="flat within noise" flat={c.row.original.p.againstFlat?.relativeShift} />,
  }),
];

/**
 * The statistical precision of a shape effect's shifts: per side, χ² against no shift and against
 * a flat shift with their p-values, and where the errors came from.
 */
export function ShiftPrecision({ precision, label }: { precision: { up: ShiftPrecisionView; down: ShiftPrecisionView }; label: string }) {
  return (
    <div className="flex flex-col gap-1 text-xs">
      <DataTable columns={columns} data={[{ side: 'Up', p: precision.up }, { side: 'Down', p: precision.down }]} getRowId={(r) => r.side} label={label} rowHeader="side" frame="plain" cellClass="py-1 text-xs" />
      <p className={precision.up.source === 'estimated' || precision.down.source === 'estimated' ? 'text-amber-ink' : 'text-ink-muted'}>{errorSource(precision)}</p>
    </div>
  );
}
