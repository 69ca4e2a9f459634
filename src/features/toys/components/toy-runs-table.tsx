import { Link } from 'react-router';
import type { ToyRun } from '@shared/schemas/toys';
import { Button } from '../../../components/ui/button';
import { FormError } from '../../../components/ui/error-notice';
import { tableClass, tdClass, thClass } from '../../../components/ui/page';
import { formatCount, formatDateTime } from '../../../lib/format';
import { FitStateBadge } from '../../../components/status/fit-state';
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

/**
 * The toy runs of a fit, newest first: where each was drawn from, its state and toys done of
 * toys asked, its workers, who asked and when; a link shows a run's numbers, and a running one
 * can be cancelled by those who may run fits.
 */
export function ToyRunsTable({ slug, fitId, runs, selectedId, mayRun }: { slug: string; fitId: number; runs: ToyRun[]; selectedId: number | null; mayRun: boolean }) {
  const cancel = useCancelToys(slug, fitId);
  return (
    <div className="flex flex-col gap-2">
      <FormError error={cancel.error} />
      <div className="overflow-x-auto rounded-lg border border-rule bg-paper-raised">
        <table className={tableClass} aria-label="Toy runs of this fit">
          <thead>
            <tr>
              <th scope="col" className={thClass}>
                Run
              </th>
              <th scope="col" className={thClass}>
                Drawn from
              </th>
              <th scope="col" className={thClass}>
                State
              </th>
              <th scope="col" className={`${thClass} text-right`}>
                Toys done / asked
              </th>
              <th scope="col" className={`${thClass} text-right`}>
                Workers
              </th>
              <th scope="col" className={thClass}>
                Started
              </th>
              {mayRun && (
                <th scope="col" className={thClass}>
                  <span className="sr-only">Actions</span>
                </th>
              )}
            </tr>
          </thead>
          <tbody>
            {runs.map((r) => {
              const on = r.id === selectedId;
              const took = duration(r);
              return (
                <tr key={r.id} aria-current={on ? 'true' : undefined} className={on ? 'bg-teal-soft/50' : 'hover:bg-paper-sunk/50'}>
                  <td className={tdClass}>
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
                  </td>
                  <td className={`${tdClass} text-xs`}>
                    <span className="block text-ink">{hypothesisInWords(r.hypothesis)}</span>
                    <span className="block text-ink-muted tabular-nums" title="The seed: the same seed gives the same toys">
                      seed {r.seed}
                    </span>
                  </td>
                  <td className={tdClass}>
                    <div className="flex flex-col items-start gap-1">
                      <FitStateBadge state={r.state} />
                      {isActive(r.state) && <ToyProgress run={r} />}
                      {r.state === 'failed' && r.failure && <span className="max-w-xs text-xs text-danger">{r.failure}</span>}
                    </div>
                  </td>
                  <td className={`${tdClass} text-right whitespace-nowrap tabular-nums`} title="Toys fitted so far, of the toys asked for">
                    {formatCount(toysDone(r))} / {formatCount(r.count)}
                  </td>
                  <td className={`${tdClass} text-right tabular-nums`} title="Worker threads or processes that fitted this run's toys">
                    {r.workers}
                  </td>
                  <td className={`${tdClass} text-xs whitespace-nowrap text-ink-soft`}>
                    {formatDateTime(r.createdAt)}
                    {r.createdBy && <span className="block text-ink-muted">{r.createdBy}</span>}
                    {took && <span className="block text-ink-muted">took {took}</span>}
                  </td>
                  {mayRun && (
                    <td className={tdClass}>
                      {isActive(r.state) && (
                        <Button size="sm" variant="danger" busy={cancel.isPending && cancel.variables === r.id} onClick={() => cancel.mutate(r.id)} aria-label={`Cancel ${toyRunName(r)}`}>
                          Cancel
                        </Button>
                      )}
                    </td>
                  )}
                </tr>
              );
            })}
          </tbody>
        </table>
      </div>
    </div>
  );
}
