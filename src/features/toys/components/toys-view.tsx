import { useSearchParams } from 'react-router';
import type { ToyRun } from '@shared/schemas/toys';
import { Button } from '../../../components/ui/button';
import { EmptyState } from '../../../components/ui/empty-state';
import { FormError } from '../../../components/ui/error-notice';
import { Panel } from '../../../components/ui/page';
import { QueryView } from '../../../components/ui/query-view';
import { useCancelToys } from '../api/cancel-toys';
import { useToyRun } from '../api/get-toy-run';
import { useToyRuns } from '../api/get-toy-runs';
import { StartToysForm } from './start-toys-form';
import { ToyRunResult } from './toy-result';
import { ToyRunsTable } from './toy-runs-table';

/** The run to show: the one named in the URL, else the newest that succeeded, else the newest. */
export function chooseRun(runs: ToyRun[], wanted: number | null): number | null {
  if (wanted !== null && runs.some((r) => r.id === wanted)) return wanted;
  return (runs.find((r) => r.state === 'succeeded') ?? runs[0])?.id ?? null;
}

function SelectedRun({ slug, fitId, toyId, mayRun }: { slug: string; fitId: number; toyId: number; mayRun: boolean }) {
  const run = useToyRun(slug, toyId);
  const cancel = useCancelToys(slug, fitId);
  return (
    <section aria-label="The chosen toy run" className="flex flex-col gap-2">
      <QueryView query={run} loadingLabel="Loading the toy run…">
        {(r) => (
          <>
            <ToyRunResult
              run={r}
              actions={
                mayRun ? (
                  <Button variant="danger" size="sm" busy={cancel.isPending} onClick={() => cancel.mutate(r.id)}>
                    Cancel the run
                  </Button>
                ) : undefined
              }
            />
            <FormError error={cancel.error} />
          </>
        )}
      </QueryView>
    </section>
  );
}

/**
 * The pseudo-experiments of a converged fit: the form to ask for toys (for those who may run
 * fits), the fit's toy runs, and the chosen run's comparison with the asymptotic formulas.
 */
export function ToysView({ slug, fitId, muHat, mayRun }: { slug: string; fitId: number; muHat: number | null; mayRun: boolean }) {
  const runs = useToyRuns(slug, fitId);
  const [params, setParams] = useSearchParams();
  const wanted = /^\d+$/.test(params.get('run') ?? '') ? Number(params.get('run')) : null;
  const selected = runs.data ? chooseRun(runs.data, wanted) : null;

  return (
    <div className="flex flex-col gap-4">
      <p className="max-w-prose text-sm text-ink-soft">
        Pseudo-experiments draw datasets from the model at a chosen point and fit each one like the data. They show whether the asymptotic formulas behind this fit's errors and
        significance hold for this model. These numbers inform the collaboration's own statistical review and approval; they do not replace it.
      </p>
      <div className="grid gap-4 xl:grid-cols-[minmax(0,1fr)_22rem]">
        <section aria-label="Toy runs" className="min-w-0">
          <QueryView query={runs} loadingLabel="Loading the toy runs…">
            {(list) =>
              list.length === 0 ? (
                <EmptyState title="No pseudo-experiments yet">
                  <p>
                    {mayRun
                      ? 'Ask for toys with the form: each run is listed here with its progress, and its numbers appear below once it has finished.'
                      : 'Analysts run pseudo-experiments; each run will be listed here with its progress and, once finished, its numbers.'}
                  </p>
                </EmptyState>
              ) : (
                <ToyRunsTable slug={slug} fitId={fitId} runs={list} selectedId={selected} mayRun={mayRun} />
              )
            }
          </QueryView>
        </section>
        {mayRun && (
          <Panel title="Run pseudo-experiments">
            <StartToysForm
              slug={slug}
              fitId={fitId}
              muHat={muHat}
              onStarted={(run) =>
                setParams(
                  (p) => {
                    const next = new URLSearchParams(p);
                    next.set('run', String(run.id));
                    return next;
                  },
                  { replace: true, preventScrollReset: true },
                )
              }
            />
          </Panel>
        )}
      </div>
      {selected !== null && <SelectedRun key={selected} slug={slug} fitId={fitId} toyId={selected} mayRun={mayRun} />}
    </div>
  );
}
