import { Link } from 'react-router';
import type { HypothesisScan } from '@shared/schemas/hypothesis-scan';
import { Button } from '../../../components/ui/button';
import { FormError } from '../../../components/ui/error-notice';
import { DataTable, dataColumns } from '../../../components/ui/data-table';
import { JobStateCell, StartedCell } from '../../../components/status/fit-state';
import { isActive } from '../../../lib/fits';
import { formatFixed } from '../../../lib/stats-format';
import { useCancelHypothesisScan } from '../api/cancel-hypothesis-scan';
import { scanName, scanPath } from '../scan-words';

const col = dataColumns<HypothesisScan>();

/** The headline of a scan in a line: its largest local excess and global Z, or its expected reach. */
function headline(s: HypothesisScan): string {
  if (s.withheld) return 'withheld (blinded data)';
  const r = s.result;
  if (!r) return '–';
  if (r.global) return `local ${formatFixed(r.global.at.z, 2)}σ at ${formatFixed(r.global.at.value, 0)}${r.parameter.unit ? ` ${r.parameter.unit}` : ''}; global ${formatFixed(r.global.upcrossingEstimate.z, 2)}σ`;
  const zs = r.points.map((p) => p.expected?.z).filter((z): z is number => typeof z === 'number');
  return zs.length ? `expected Z up to ${formatFixed(Math.max(...zs), 2)}σ` : '–';
}

function makeColumns(slug: string, mayRun: boolean, cancel: ReturnType<typeof useCancelHypothesisScan>) {
  return col.columns([
    col.accessor('id', {
      id: 'scan',
      header: 'Scan',
      cell: (c) => (
        <>
          <Link to={scanPath(slug, c.row.original.id)} className="font-medium text-teal-ink hover:underline">
            {scanName(c.row.original)}
          </Link>
          <span className="block text-2xs text-ink-muted">
            version {c.row.original.version} · {c.row.original.hypotheses} hypotheses
          </span>
        </>
      ),
    }),
    col.accessor('state', {
      header: 'State',
      cell: (c) => <JobStateCell job={c.row.original} />,
    }),
    col.display({ id: 'headline', header: 'What it says', cell: (c) => <span className="text-sm">{headline(c.row.original)}</span> }),
    col.accessor('createdAt', {
      header: 'Started',
      meta: { nowrap: true, cellClass: 'text-xs text-ink-soft' },
      cell: (c) => <StartedCell at={c.getValue()} by={c.row.original.createdBy} />,
    }),
    ...(mayRun
      ? [
          col.display({
            id: 'actions',
            header: 'Actions',
            meta: { srOnlyHeader: true },
            cell: (c) =>
              isActive(c.row.original.state) && (
                <Button size="sm" variant="danger" busy={cancel.isPending && cancel.variables === c.row.original.id} onClick={() => cancel.mutate(c.row.original.id)}>
                  Cancel
                </Button>
              ),
          }),
        ]
      : []),
  ]);
}

/** The scans over signal hypotheses of an analysis, newest first. */
export function ScansTable({ slug, scans, mayRun }: { slug: string; scans: HypothesisScan[]; mayRun: boolean }) {
  const cancel = useCancelHypothesisScan(slug);
  return (
    <div className="flex flex-col gap-2">
      <FormError error={cancel.error} />
      <DataTable columns={makeColumns(slug, mayRun, cancel)} data={scans} getRowId={(s) => String(s.id)} label="Scans over signal hypotheses" />
    </div>
  );
}
