import type { HypothesisPointResult, HypothesisScanResult } from '@shared/schemas/hypothesis-scan';
import { Badge } from '../../../components/ui/badge';
import { DataTable, dataColumns } from '../../../components/ui/data-table';
import { formatFixed, formatProbability } from '../../../lib/stats-format';

const col = dataColumns<HypothesisPointResult>();

function columns(result: HypothesisScanResult, unit: string) {
  const observed = result.dataset === 'observed';
  return col.columns([
    col.accessor('value', {
      header: unit ? `${result.parameter.name} [${unit}]` : result.parameter.name,
      meta: { numeric: true, nowrap: true },
      cell: (c) => (
        <>
          <span className="font-medium text-ink">{formatFixed(c.getValue(), 1)}</span>
          <span className="block text-2xs text-ink-muted">{c.row.original.label || c.row.original.key}</span>
        </>
      ),
    }),
    col.accessor('status', {
      header: 'Fit',
      cell: (c) => {
        const p = c.row.original;
        return p.status === 'converged' ? (
          <div className="flex flex-col items-start gap-0.5">
            <Badge tone="teal" title="Every fit of this hypothesis met the stopping rule (Newton decrement below 1e-9)">
              Converged
            </Badge>
            {p.warnings.length > 0 && (
              <span className="text-2xs text-amber-ink" title={p.warnings.join('\n')}>
                {p.warnings.length} warning{p.warnings.length > 1 ? 's' : ''}
              </span>
            )}
          </div>
        ) : (
          <div className="flex max-w-56 flex-col items-start gap-0.5">
            <Badge tone="danger" title="No number of this hypothesis is shown">
              Not converged
            </Badge>
            <span className="text-2xs text-danger">{p.message}</span>
          </div>
        );
      },
    }),
    ...(observed
      ? [
          col.accessor((p) => p.mu?.value ?? null, {
            id: 'mu',
            header: 'μ̂',
            meta: { numeric: true, nowrap: true, headerTitle: 'Best-fit signal strength at this hypothesis, with its error' },
            cell: (c) => {
              const mu = c.row.original.mu;
              return mu ? `${formatFixed(mu.value, 2)} ± ${formatFixed(mu.error, 2)}` : '–';
            },
          }),
          col.accessor((p) => p.local?.z ?? null, {
            id: 'z',
            header: 'Local Z',
            meta: { numeric: true, nowrap: true, headerTitle: 'Local significance Z = √q0 of the excess at this hypothesis' },
            cell: (c) => (c.row.original.local ? `${formatFixed(c.row.original.local.z, 2)}σ` : '–'),
          }),
          col.accessor((p) => p.local?.p0 ?? null, {
            id: 'p0',
            header: 'Local p0',
            meta: { numeric: true, nowrap: true, headerTitle: 'Probability of an excess at least this large from the background alone, at this hypothesis' },
            cell: (c) => formatProbability(c.row.original.local?.p0),
          }),
        ]
      : []),
    col.accessor((p) => p.expected?.z ?? null, {
      id: 'expectedZ',
      header: 'Expected Z',
      meta: { numeric: true, nowrap: true, headerTitle: 'Median significance expected if the signal is there with μ = 1' },
      cell: (c) => (c.row.original.expected ? `${formatFixed(c.row.original.expected.z, 2)}σ` : '–'),
    }),
    ...(observed
      ? [
          col.accessor((p) => p.limit?.observed ?? null, {
            id: 'observedLimit',
            header: 'Observed limit',
            meta: { numeric: true, nowrap: true, headerTitle: '95 % CL upper limit on μ (CLs)' },
            cell: (c) => formatFixed(c.row.original.limit?.observed, 3),
          }),
        ]
      : []),
    col.accessor((p) => p.limit?.expected?.median ?? null, {
      id: 'expectedLimit',
      header: 'Expected limit',
      meta: { numeric: true, nowrap: true, headerTitle: 'Median expected 95 % CL upper limit on μ, with its ±1σ band' },
      cell: (c) => {
        const e = c.row.original.limit?.expected;
        return e ? (
          <>
            {formatFixed(e.median, 3)}
            <span className="block text-2xs text-ink-muted">
              [{formatFixed(e.minus1, 2)}, {formatFixed(e.plus1, 2)}]
            </span>
          </>
        ) : (
          '–'
        );
      },
    }),
  ]);
}

/** Every hypothesis of a scan, by value: its fit's state and warnings, and its numbers (none for a fit that failed). */
export function ScanPointsTable({ result }: { result: HypothesisScanResult }) {
  const points = [...result.points].sort((a, b) => a.value - b.value);
  return (
    <DataTable
      columns={columns(result, result.parameter.unit)}
      data={points}
      getRowId={(p) => p.key}
      label="Hypotheses of this scan"
      rowTone={(p) => (p.status !== 'converged' ? 'marked' : undefined)}
    />
  );
}
