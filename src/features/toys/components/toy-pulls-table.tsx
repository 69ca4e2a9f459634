import { createContext, useContext, useMemo, useState } from 'react';
import type { ToyDistribution } from '@shared/schemas/toys';
import { CheckboxField } from '../../../components/ui/field';
import { DataTable, dataColumns } from '../../../components/ui/data-table';
import { Panel } from '../../../components/ui/page';
import { formatCount } from '../../../lib/format';
import { normalPdf } from '../../../lib/normal';
import { decimalsFor, formatFixed, formatSigned } from '../../../lib/stats-format';
import { deviationOf, FLAG_ERRORS, type Deviation } from '../toy-stats';
import { DeviationBadges, formatErrors, MeanSd } from './mean-sd';
import { ToyHistogramChart } from './toy-histogram-chart';

export type ToyPullRow = ToyDistribution & { dev: Deviation; flagged: boolean; worst: number };

const col = dataColumns<ToyPullRow>();

/** Larger |distance| sorts as larger; a missing one sorts last. */
const byAbs = (a: number | null, b: number | null) => (a === null ? (b === null ? 0 : -1) : b === null ? 1 : Math.abs(a) - Math.abs(b));

/** The rows in reading order: marked ones first, the worst first, then by name. */
export function toyPullRows(pulls: ToyDistribution[]): ToyPullRow[] {
  return pulls
    .map((d) => {
      const dev = deviationOf(d);
      return { ...d, dev, flagged: dev.meanOff || dev.sdOff, worst: Math.max(Math.abs(dev.mean ?? 0), Math.abs(dev.sd ?? 0)) };
    })
    .sort((a, b) => Number(b.flagged) - Number(a.flagged) || b.worst - a.worst || a.name.localeCompare(b.name));
}

/** The chosen parameter and how to choose one, for the name cells (the columns stay put, so focus stays on the button). */
const Choice = createContext<{ chosen: string | null; choose: (name: string) => void }>({ chosen: null, choose: () => {} });

function ChooseButton({ name }: { name: string }) {
  const { chosen, choose } = useContext(Choice);
  return (
    <button
      type="button"
      aria-pressed={name === chosen}
      onClick={(e) => {
        e.stopPropagation();
        choose(name);
      }}
      className={`rounded px-1 font-mono text-xs font-medium hover:underline ${name === chosen ? 'text-ink' : 'text-teal-ink'}`}
      title={`Show the toy distribution of ${name}`}
    >
      {name}
    </button>
  );
}

const columns = col.columns([
  col.accessor('name', {
    header: 'Parameter',
    sortFn: 'alphanumeric',
    cell: (c) => <ChooseButton name={c.getValue()} />,
  }),
  col.accessor('n', {
    header: 'Toys used',
    sortFn: 'basic',
    meta: { numeric: true },
    cell: (c) => (
      <span className="tabular-nums" title="Toys whose fit converged">
        {formatCount(c.getValue())}
      </span>
    ),
  }),
  col.accessor('mean', {
    header: 'Mean',
    sortFn: 'basic',
    meta: { numeric: true },
    cell: (c) => {
      const r = c.row.original;
      const dec = decimalsFor(r.meanError);
      return (
        <span className={`tabular-nums ${r.dev.meanOff ? 'font-semibold text-plum' : ''}`} title="Mean of (θ̂ − θ generated)/σ_θ over the toys ± its standard error; expected 0">
          {formatSigned(r.mean, dec)} ± {formatFixed(r.meanError, dec)}
        </span>
      );
    },
  }),
  col.accessor((r) => r.dev.mean, {
    id: 'meanErrors',
    header: 'Mean / error',
    sortFn: (a, b) => byAbs(a.original.dev.mean, b.original.dev.mean),
    meta: { numeric: true },
    cell: (c) => (
      <span className="text-xs tabular-nums" title={`How many standard errors the mean lies from 0; beyond ${FLAG_ERRORS} is marked`}>
        {formatErrors(c.row.original.dev.mean)}
      </span>
    ),
  }),
  col.accessor('sd', {
    header: 'SD',
    sortFn: 'basic',
    meta: { numeric: true },
    cell: (c) => {
      const r = c.row.original;
      const dec = decimalsFor(r.sdError);
      return (
        <span className={`tabular-nums ${r.dev.sdOff ? 'font-semibold text-amber-ink' : ''}`} title="Standard deviation of the standardised values ± its standard error; expected 1">
          {formatFixed(r.sd, dec)} ± {formatFixed(r.sdError, dec)}
        </span>
      );
    },
  }),
  col.accessor((r) => r.dev.sd, {
    id: 'sdErrors',
    header: '(SD − 1) / error',
    sortFn: (a, b) => byAbs(a.original.dev.sd, b.original.dev.sd),
    meta: { numeric: true },
    cell: (c) => (
      <span className="text-xs tabular-nums" title={`How many standard errors the sd lies from 1; beyond ${FLAG_ERRORS} is marked`}>
        {formatErrors(c.row.original.dev.sd)}
      </span>
    ),
  }),
  col.accessor('flagged', {
    header: 'Marked',
    sortFn: (a, b) => Number(a.original.flagged) - Number(b.original.flagged) || a.original.worst - b.original.worst,
    cell: (c) => (c.getValue() ? <DeviationBadges d={c.row.original} /> : <span className="text-xs text-ink-muted">–</span>),
  }),
]);

/**
 * Every nuisance parameter's standardised toy distribution as a sortable table: mean and sd with
 * their standard errors and their distances from 0 and 1, marking those beyond FLAG_ERRORS. The
 * chosen row's histogram is drawn beneath with the standard normal curve.
 */
export function ToyPullsTable({ pulls }: { pulls: ToyDistribution[] }) {
  const all = useMemo(() => toyPullRows(pulls), [pulls]);
  const [markedOnly, setMarkedOnly] = useState(false);
  const [chosen, setChosen] = useState<string | null>(null);
  const rows = useMemo(() => (markedOnly ? all.filter((r) => r.flagged) : all), [all, markedOnly]);
  const selected = all.find((r) => r.name === chosen) ?? rows[0] ?? null;
  const marked = all.filter((r) => r.flagged).length;
  const choice = useMemo(() => ({ chosen: selected?.name ?? null, choose: setChosen }), [selected?.name]);

  if (all.length === 0)
    return (
      <Panel title="Nuisance parameters over the toys">
        <p className="text-sm text-ink-muted">This fit has no free nuisance parameter, so there are no pulls to compare.</p>
      </Panel>
    );

  return (
    <Panel title="Nuisance parameters over the toys">
      <div className="flex flex-col gap-3">
        <div className="flex flex-wrap items-end justify-between gap-3">
          <p className="max-w-prose text-xs text-ink-soft">
            Each parameter's (θ̂ − θ generated)/σ_θ over the toys, with σ_θ the fit's post-fit error; expected mean 0 and sd 1. A row is marked when its mean is more than{' '}
            {FLAG_ERRORS} standard errors from 0 or its sd more than {FLAG_ERRORS} from 1. Choose a parameter to see its distribution.
          </p>
          <CheckboxField label={`Marked only (${marked} of ${all.length})`} checked={markedOnly} onChange={(e) => setMarkedOnly(e.target.checked)} />
        </div>
        <Choice.Provider value={choice}>
          <DataTable
            columns={columns}
            data={rows}
            sortable
            getRowId={(r) => r.name}
            label="Nuisance parameters over the toys"
            frameClass="max-h-[28rem]"
            stickyFirstColumn
            cellClass="py-1 align-middle whitespace-nowrap"
            rowTone={(r) => (r.name === selected?.name ? 'current' : r.flagged ? 'marked' : undefined)}
            onRowClick={(r) => setChosen(r.name)}
            empty="No parameter is marked."
          />
        </Choice.Provider>
        {selected && (
          <section aria-label={`Toy distribution of ${selected.name}`} className="grid gap-4 lg:grid-cols-[minmax(0,3fr)_minmax(0,2fr)]">
            <ToyHistogramChart
              histogram={selected.histogram}
              title={`Pull of ${selected.name} over ${formatCount(selected.n)} toys`}
              description={`Each toy's fitted ${selected.name} minus the value it was drawn at, in units of the fit's post-fit σ (${formatFixed(selected.referenceError, 3)}). If σ is right and the estimate unbiased, the bars follow the standard normal curve.`}
              xTitle={`(θ̂ − θ generated) / σ_θ for ${selected.name}`}
              valueName="standardised value"
              expectationLabel={`standard normal × ${formatCount(selected.n)} toys`}
              density={(x) => selected.n * normalPdf(x)}
            />
            <div className="flex flex-col gap-2">
              <h3 className="flex flex-wrap items-center gap-2 text-sm font-semibold text-ink">
                <span className="font-mono">{selected.name}</span>
                <DeviationBadges d={selected} />
              </h3>
              <MeanSd d={selected} estimate={`the fitted ${selected.name}`} errorName="σ" />
            </div>
          </section>
        )}
      </div>
    </Panel>
  );
}
