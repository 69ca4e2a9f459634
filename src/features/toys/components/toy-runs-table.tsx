import { Link } from 'react-router';
import type { ToyRun } from '@shared/schemas/toys';
import { Button } from '../../../components/ui/button';
import { FormError } from '../../../components/ui/error-notice';
import { DataTable, dataColumns } from '../../../components/ui/data-table';
import { formatCount } from '../../../lib/format';
import { JobStateCell, StartedCell } from '../../../components/status/fit-state';
import { isActive } from '../../../lib/fits';
import { useCancelToys } from '../api/cancel-toys';
import { hypothesisInWords, toyRunName } from '../toy-stats';
import { ToyProgress, toysDone } from './toy-progress';

/** How long a run took, from its start to its end, in words. */
function duration(r: ToyRun): string | null {
  if (!r.startedAt || !r.finishedAt) return null;
  const s = (new Date(r.finishedAt).getTime() - new Date(r.startedAt).getTime()) / 1000;
  if (!Number.isFinite(s) || s < 0) return null;
  return s < 90 ? `${Math.round(s)} s` : s < 5400 ? `${Math.round(s / 60)} min` : `${(s / 3600).toFixed(1)} h`;
}

const col = dataColumns<ToyRun>();

function makeColumns(selectedId: number | null, mayRun: boolean, cancel: ReturnType<typeof useCancelToys>) {
  return col.columns([
    col.accessor('id', {
      id: 'run',
      header: 'Run',
      cell: (c) => {
        const r = c.row.original;
        const on = r.id === selectedId;
        return (
          <>
            <Link
              to={`?run=${r.id}`}
              replace
              preventScrollReset
              className={`font-medium hover:underline ${on ? 'text-ink' : 'text-teal-ink'}`}
              title={on ? 'Shown below' : 'Show this run below'}
            >
              {toyRunName(r)}
            </Link>
            <span className="block text-2xs text-ink-muted">#{r.id}</span>
          </>
        );
      },
    }),
    col.accessor('hypothesis', {
      header: 'Drawn from',
      meta: { cellClass: 'text-xs' },
      cell: (c) => (
        <>
          <span className="block text-ink">{hypothesisInWords(c.getValue())}</span>
          <span className="block text-ink-muted tabular-nums" title="The seed: the same seed gives the same toys">
            seed {c.row.original.seed}
          </span>
        </>
      ),
    }),
    col.accessor('state', {
      header: 'State',
      cell: (c) => <JobStateCell job={c.row.original} progress={<ToyProgress run={c.row.original} />} />,
    }),
    col.accessor('count', {
      id: 'toys',
      header: 'Toys done / asked',
      meta: { numeric: true, nowrap: true, cellTitle: 'Toys fitted so far, of the toys asked for' },
      cell: (c) => `${formatCount(toysDone(c.row.original))} / ${formatCount(c.getValue())}`,
    }),
    col.accessor('workers', { header: 'Workers', meta: { numeric: true, cellTitle: "Worker threads or processes that fitted this run's toys" } }),
    col.accessor('createdAt', {
      header: 'Started',
      meta: { nowrap: true, cellClass: 'text-xs text-ink-soft' },
      cell: (c) => <StartedCell at={c.getValue()} by={c.row.original.createdBy} took={duration(c.row.original)} />,
    }),
    ...(mayRun
      ? [
          col.display({
            id: 'actions',
            header: 'Actions',
            meta: { srOnlyHeader: true },
            cell: (c) => {
              const r = c.row.original;
              return (
                isActive(r.state) && (
                  <Button size="sm" variant="danger" busy={cancel.isPending && cancel.variables === r.id} onClick={() => cancel.mutate(r.id)} aria-label={`Cancel ${toyRunName(r)}`}>
                    Cancel
                  </Button>
                )
              );
            },
          }),
        ]
      : []),
  ]);
}

/**
 * The toy runs of a fit, newest first: where each was drawn from, its state and toys done of
 * toys asked, its workers, who asked and when; a link shows a run's numbers, and a running one
 * can be cancelled by those who may run fits.
 */
export function ToyRunsTable({ slug, fitId, runs, selectedId, mayRun }: { slug: string; fitId: number; runs: ToyRun[]; selectedId: number | null; mayRun: boolean }) {
  const cancel = useCancelToys(slug, fitId);
  const columns = makeColumns(selectedId, mayRun, cancel);
  return (
    <div className="flex flex-col gap-2">
      <FormError error={cancel.error} />
      <DataTable
        columns={columns}
        data={runs}
        getRowId={(r) => String(r.id)}
        label="Toy runs of this fit"
        rowTone={(r) => (r.id === selectedId ? 'current' : undefined)}
      />
    </div>
  );
}
