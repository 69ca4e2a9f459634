import type { Model } from '@shared/schemas/api';
import { DataTable, dataColumns } from '../../../components/ui/data-table';
import { Panel } from '../../../components/ui/page';

/** One row of the panel: μ, or a parameter of interest the model declares. */
type PoiRow = { key: string; label: string; range: [number, number] | null; start: number | null; multiplies: { region: string; process: string }[] };

const pair = (t: { region: string; process: string }) => `${t.region}\u0000${t.process}`;

/** μ multiplies every signal template that no declared parameter of interest claims. */
export function poiRows(model: Model): PoiRow[] {
  const claimed = new Set(model.parametersOfInterest.flatMap((q) => q.targets.map(pair)));
  const signal = new Set(model.processes.filter((p) => p.kind === 'signal').map((p) => p.key));
  const mu: PoiRow = {
    key: 'mu',
    label: 'Signal strength μ',
    range: null,
    start: null,
    multiplies: model.templates.filter((t) => signal.has(t.process) && !claimed.has(pair(t))).map((t) => ({ region: t.region, process: t.process })),
  };
  return [mu, ...model.parametersOfInterest.map((q) => ({ key: q.key, label: q.label, range: [q.min, q.max] as [number, number], start: q.start, multiplies: q.targets }))];
}

const col = dataColumns<PoiRow>();

const columns = [
  col.accessor('key', {
    header: 'Parameter',
    meta: { nowrap: true },
    cell: (c) => {
      const q = c.row.original;
      return (
        <>
          {q.label && <span className="mr-2 font-medium">{q.label}</span>}
          <span className={`font-mono text-xs ${q.label ? 'text-ink-muted' : 'font-medium'}`}>{q.key}</span>
        </>
      );
    },
  }),
  col.display({
    id: 'range',
    header: 'Allowed range',
    meta: { numeric: true, nowrap: true, cellTitle: (q) => (q.range ? 'The fit keeps the strength within this range' : 'μ’s range is the analysis’s own (shown on its overview)') },
    cell: (c) => (c.row.original.range ? `[${c.row.original.range[0]}, ${c.row.original.range[1]}]` : <span className="text-ink-muted">—</span>),
  }),
  col.accessor('start', {
    header: 'Start',
    meta: { numeric: true, cellTitle: (q) => (q.start === null ? 'μ’s start is the analysis’s own (shown on its overview)' : 'Strength where the fit starts (1: as predicted)') },
    cell: (c) => (c.getValue() === null ? <span className="text-ink-muted">—</span> : c.getValue()),
  }),
  col.display({
    id: 'multiplies',
    header: 'Multiplies (region × process)',
    meta: { cellClass: 'text-xs' },
    cell: (c) => {
      const targets = c.row.original.multiplies;
      return targets.length ? targets.map((t) => `${t.region} × ${t.process}`).join(', ') : <span className="text-ink-muted">no signal template: every one has its own parameter</span>;
    },
  }),
];

/**
 * The signal strengths the fit measures together: μ first (the signal templates no other claims),
 * then each parameter of interest the model file declares, with its range, start and templates.
 */
export function ParametersOfInterestPanel({ model }: { model: Model }) {
  const rows = poiRows(model);
  return (
    <Panel title={`Parameters of interest (${rows.length})`}>
      <p className="mb-3 text-sm text-ink-soft">
        Each is a free factor on its own signal templates, measured together with the others; μ multiplies the signal templates that no other one claims (its start and range are the
        analysis’s, on its overview). They are set by importing a model file (its <span className="font-mono text-xs">parametersOfInterest</span>, described in{' '}
        <span className="font-medium">docs/exchange-file.md</span>, “Parameters of interest”), not edited here.
      </p>
      <DataTable columns={columns} data={rows} getRowId={(q) => q.key} label="Parameters of interest" rowHeader="key" frame="plain" frameClass="-mx-4 -mb-3" />
    </Panel>
  );
}
