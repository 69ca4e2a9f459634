import { useSearchParams } from 'react-router';
import type { RowData } from '@tanstack/react-table';
import type { FitComparison, FitSummary } from '@shared/schemas/fits';
import { SelectField } from '../../../components/ui/field';
import { DataTable, dataColumns, type DataColumn } from '../../../components/ui/data-table';
import { Panel } from '../../../components/ui/page';
import { QueryView } from '../../../components/ui/query-view';
import { formatDateTime } from '../../../lib/format';
import { formatFixed, formatSigned } from '../../../lib/stats-format';
import { useComparison } from '../api/get-comparison';
import { useFits } from '../api/get-fits';
import { datasetInWords, fitName } from '../../../lib/fits';

type Delta = FitComparison['mu'];

/** A quantity in both fits and its change: three numeric columns, the change marked when it reaches 0.5. */
function deltaColumns<T extends RowData>(label: string, delta: (row: T) => Delta, title: (row: T) => string, digits = 3): DataColumn<T>[] {
  const col = dataColumns<T>();
  return [
    col.accessor((r) => delta(r).a, {
      id: `${label}-a`,
      header: `${label}, this`,
      meta: { numeric: true, cellTitle: (r) => `${title(r)} in this fit` },
      cell: (c) => formatFixed(c.getValue(), digits),
    }),
    col.accessor((r) => delta(r).b, {
      id: `${label}-b`,
      header: 'other',
      meta: { numeric: true, cellTitle: (r) => `${title(r)} in the other fit` },
      cell: (c) => formatFixed(c.getValue(), digits),
    }),
    col.accessor((r) => delta(r).delta, {
      id: `${label}-delta`,
      header: 'Δ',
      meta: {
        numeric: true,
        cellTitle: (r) => `Change of the ${title(r).toLowerCase()}: other − this`,
        cellClass: (r) => {
          const d = delta(r).delta;
          return d !== null && Math.abs(d) >= 0.5 ? 'font-semibold text-plum' : '';
        },
      },
      cell: (c) => formatSigned(c.getValue(), digits),
    }),
  ];
}

function fitNameAndVersion(f: FitSummary) {
  return `${fitName(f)} (#${f.id}, version ${f.version})`;
}

type Quantity = { name: string; delta: Delta; title: string };
type ParameterChange = FitComparison['parameters'][number];

const quantity = dataColumns<Quantity>();
const muColumns = [quantity.accessor('name', { header: 'Quantity' }), ...deltaColumns<Quantity>('Value', (r) => r.delta, (r) => r.title)];

const change = dataColumns<ParameterChange>();
const parameterColumns = [
  change.accessor('name', {
    header: 'Parameter',
    meta: { nowrap: true },
    cell: (c) => {
      const p = c.row.original;
      return (
        <>
          <span className="font-mono text-xs">{p.name}</span>
          {p.only && <span className="ml-1 text-xs text-amber-ink">only in {p.only === 'a' ? 'this fit' : 'the other fit'}</span>}
          {p.group && <span className="ml-2 text-2xs text-ink-muted">{p.group}</span>}
        </>
      );
    },
  }),
  ...deltaColumns<ParameterChange>('Pull', (p) => p.pull, () => 'Pull'),
  ...deltaColumns<ParameterChange>('Constraint', (p) => p.constraint, () => 'Constraint'),
  ...deltaColumns<ParameterChange>('Impact', (p) => p.impact, () => 'Impact max(|Δμ+|, |Δμ−|)', 4),
  change.accessor('change', {
    header: 'Change',
    meta: { numeric: true, headerTitle: 'The largest |Δ| of pull, constraint and impact: the sort key', cellClass: 'font-semibold', cellTitle: 'Largest |Δ| of pull, constraint and impact' },
    cell: (c) => formatFixed(c.getValue(), 3),
  }),
];

/** The changes from this fit to another, largest first. */
export function ComparisonTable({ comparison: c }: { comparison: FitComparison }) {
  const params = [...c.parameters].sort((x, y) => y.change - x.change || x.name.localeCompare(y.name));
  const mu: Quantity[] = [
    { name: 'μ̂', delta: c.mu, title: 'Best-fit μ' },
    { name: 'σ_μ', delta: c.muError, title: 'σ_μ' },
  ];
  return (
    <div className="flex flex-col gap-4">
      <Panel title="Signal strength">
        <DataTable columns={muColumns} data={mu} label="Change in the signal strength" rowHeader="name" frame="plain" />
      </Panel>
      <Panel title={`Nuisance parameters, largest change first (${params.length})`}>
        <DataTable columns={parameterColumns} data={params} getRowId={(p) => p.name} label="Changes per parameter" rowHeader="name" frame="plain" stickyFirstColumn />
      </Panel>
    </div>
  );
}

/** Choose another fit of the analysis and read what changed. */
export function CompareView({ slug, fitId }: { slug: string; fitId: number }) {
  const [params, setParams] = useSearchParams();
  const fits = useFits(slug);
  const raw = params.get('with');
  const otherId = raw && /^\d+$/.test(raw) ? Number(raw) : null;
  const comparison = useComparison(slug, fitId, otherId);
  const others = (fits.data ?? []).filter((f) => f.id !== fitId && f.state === 'succeeded');
  return (
    <div className="flex flex-col gap-4">
      <SelectField
        label="Compare with"
        value={otherId ?? ''}
        onChange={(e) => setParams(e.target.value ? { with: e.target.value } : {}, { replace: true })}
        className="max-w-xl"
        hint={fits.isSuccess && others.length === 0 ? 'No other finished fit in this analysis yet.' : undefined}
      >
        <option value="">Choose another fit…</option>
        {others.map((f) => (
          <option key={f.id} value={f.id}>
            {fitNameAndVersion(f)}: {datasetInWords(f.options)}, {formatDateTime(f.createdAt)}
          </option>
        ))}
      </SelectField>
      {otherId !== null && (
        <QueryView query={comparison} loadingLabel="Comparing the fits…">
          {(c) => (
            <>
              <p className="text-sm text-ink-soft">
                Δ = <strong>{fitNameAndVersion(c.b)}</strong> − <strong>{fitNameAndVersion(c.a)}</strong>.
              </p>
              <ComparisonTable comparison={c} />
            </>
          )}
        </QueryView>
      )}
    </div>
  );
}
